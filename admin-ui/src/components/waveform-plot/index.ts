export { WaveformPlot, type WaveformPlotProps } from './waveform-plot';
export { beatMarks, cycleMarks, buildPlotData } from './marks';
export { SWEEP_SPEEDS, DEFAULT_SWEEP, visibleSeconds } from './sweep';
