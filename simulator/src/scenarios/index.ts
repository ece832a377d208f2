export { SCENARIOS, SCENARIO_IDS, EHR_OUTAGE } from './catalogue';
export { scenarioContext, scenarioSpec, scenarioSwing, tidalVolumeMl, expandDisturbances } from './spec';
export { checkWindow, PPV_TOLERANCE_POINTS, type WindowCheck } from './ground-truth';
export { DEMO_MONITOR_PROFILE, DEMO_MONITORS, channelCodesFor, type DemoMonitor } from './monitor-models';
export type * from './types';
