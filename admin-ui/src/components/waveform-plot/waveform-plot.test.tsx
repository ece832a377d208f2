import { describe, expect, it } from 'vitest';
import { fireEvent, render, screen } from '@testing-library/react';
import userEvent from '@testing-library/user-event';
import { fixtureWindow } from '@/test/analysis-fixture';
import { WaveformPlot } from './waveform-plot';
import { visibleSeconds, PX_PER_MM } from './sweep';

const marks = (kind: string) => document.querySelectorAll(`[data-mark="${kind}"]`);

describe('waveform plot marks', () => {
  it('draws one mark per beat and per cycle of the AnalysisResult at the default 6.25 mm/s', () => {
    const { waveform, analysis } = fixtureWindow({
      rejected: { 3: ['sbp-jump'], 10: ['ectopic', 'period-jump'] },
      unusableCycles: { 0: ['partial'], 7: ['partial', 'too-few-beats'] },
    });
    render(<WaveformPlot waveform={waveform} analysis={analysis} width={960} />);
    const beats = analysis.beats.abp!.beats;
    // 30 s fits in 860 px at 6.25 mm/s (860 / (6.25 × 3.78) ≈ 36 s), so every mark is in view.
    expect(marks('beat-accepted')).toHaveLength(beats.length - 2);
    expect(marks('beat-rejected')).toHaveLength(2);
    expect(marks('cycle-usable')).toHaveLength(analysis.cycles.length - 2);
    expect(marks('cycle-unusable')).toHaveLength(2);
    expect(document.querySelectorAll('[data-mark="cycle-usable"][data-used]')).toHaveLength(3);
    expect(screen.getByRole('radio', { name: '6.25 mm/s' })).toHaveProperty('checked', true);
  });

  it('names every rejected beat’s reasons, and shows them on hover', async () => {
    const { waveform, analysis } = fixtureWindow({ rejected: { 10: ['ectopic', 'period-jump'] } });
    render(<WaveformPlot waveform={waveform} analysis={analysis} width={960} />);
    const rejected = marks('beat-rejected')[0]!;
    expect(rejected.getAttribute('data-reasons')).toBe('ectopic period-jump');
    expect(rejected.getAttribute('aria-label')).toBe('ABP beat 10: rejected — Ectopic, Period jump');
    fireEvent.mouseEnter(rejected);
    const tip = await screen.findByRole('tooltip');
    expect(tip.textContent).toContain('Ectopic');
    expect(tip.textContent).toContain('Period jump');
    const cycle = marks('cycle-usable')[0]!;
    expect(cycle.getAttribute('aria-label')).toMatch(/^Cycle \d+: usable/);
  });

  it('at 25 mm/s shows only the beats that fit the narrower time span, and panning brings the rest', async () => {
    const { waveform, analysis } = fixtureWindow();
    render(<WaveformPlot waveform={waveform} analysis={analysis} width={960} />);
    await userEvent.click(screen.getByRole('radio', { name: '25 mm/s' }));
    // Plot area 860 px (960 minus the fallback axis allowance) at 25 mm/s, CSS 96 px/inch.
    const span = visibleSeconds(860, 25);
    expect(span).toBeCloseTo(860 / (25 * PX_PER_MM), 6);
    const inView = analysis.beats.abp!.beats.filter((b) => b.peakTime <= span).length;
    expect(marks('beat-accepted')).toHaveLength(inView);
    await userEvent.click(screen.getByRole('button', { name: 'Pan forward' }));
    const first = Number(
      marks('beat-accepted')[0]!
        .getAttribute('aria-label')!
        .match(/beat (\d+)/)![1],
    );
    expect(first).toBeGreaterThan(0);
  });
});
