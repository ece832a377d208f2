/** `@ebbgate/simulator`: the adapter client, the bedside scenarios and the demo runner. */
export * from './adapter/index';
export { runDemoScenario, assignScenario, type DemoOptions, type DemoMonitorInput, type RunningDemo, type StreamedChallenge } from './demo';
export { simulatedClock, type SimulatedClock } from './simulation/sim-clock';
export * from './scenarios/index';
export { BedStream, type BedStreamOptions, type StreamChunk } from './stream/bed-stream';
export { MonitorFeed } from './simulation/monitor-feed';
export { provisionMonitors, loadMonitorId, signIn, demoIntegrator } from './simulation/provision';
export { respiratorySwing, strokeVolume, curveSlope, DEMO_VENTRICLE } from './physiology/frank-starling';
export { provisionDemoMonitors } from './simulation/demo-provision';
