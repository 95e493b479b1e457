/** The demo's fictional substation simulator: pure generation, the timer loop, and two ways to deliver frames. */
export { SubstationSimulator } from './generator.js';
export type { FeederTruth, SimulatedFrame, SimulatorOptions } from './generator.js';
export { SimulatorLoop, simulatedFrameTopic } from './simulator-loop.js';
export type { SimulatorLoopOptions, SimulatorLoopState, SimulatorLoopStats } from './simulator-loop.js';
export { startSimulatorPublisher } from './simulator-mqtt.js';
export type { SimulatorPublisher, SimulatorPublisherOptions } from './simulator-mqtt.js';
export { SimulatorFrameSource } from './simulator-source.js';
export { NOMINAL_LL_V, NOMINAL_LN_V, SUBSTATION_NAME, SUBSTATION_NOTE, WRENMOOR_FEEDERS } from './substation.js';
export type { Lateral, SimFeeder } from './substation.js';
