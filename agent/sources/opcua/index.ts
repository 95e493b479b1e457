/** OPC UA client source: public surface of agent/sources/opcua. */
export { OpcuaSource, type OpcuaSourceCounters } from './opcua-source.js';
export { FrameAssembler, feederSlots, type AssemblerCounters, type AssemblerSettings, type Slot } from './frame-assembler.js';
export {
  validateOpcuaOptions,
  SECURITY_MODES,
  SECURITY_POLICIES,
  type OpcuaSourceOptions,
  type OpcuaFeeder,
  type PhasorFeeder,
  type RmsFeeder,
  type OpcuaSecurityMode,
  type OpcuaSecurityPolicy,
  type SourceLogger,
} from './options.js';
