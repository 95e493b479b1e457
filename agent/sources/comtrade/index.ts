/** COMTRADE (IEEE C37.111 / IEC 60255-24) reading: public surface of agent/sources/comtrade. */
export * from './types.js';
export { parseCfg, splitLines } from './cfg-parser.js';
export { parseDat, parseAsciiDat, parseBinaryDat, binaryRecordSize, declaredSampleCount } from './dat-parser.js';
export { splitCff, type CffSections } from './cff.js';
export { buildRecord, requireFixedRate, type RecordOptions } from './record.js';
export { readComtradeRecord, type ReadOptions } from './read-record.js';
export { unitInfo, channelScale, type Quantity, type UnitInfo } from './units.js';
export { mapPhaseChannels, phaseFromField, fromName, type ChannelOverride, type ChannelRef, type PhaseChannels, type PhaseLetter } from './channel-map.js';
export { recordToSamplesFrames, samplesFrameToWire, scaledChannel, type SamplesFrameOptions } from './samples-frames.js';
export { ComtradeSource, feederIdFrom, type ComtradeSourceOptions } from './comtrade-source.js';
export { parseComtradeDateTime, parseUtcOffset } from './time.js';
