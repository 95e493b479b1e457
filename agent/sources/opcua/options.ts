/**
 * Options of the OPC UA source and their validation. Invalid options are a
 * SRC_CONFIG AgentError naming the option path, raised before any connection.
 */
import { AgentError } from '../../core/errors.js';
import { FEEDER_ID_PATTERN } from '../../core/frames.js';
import type { SourceStatus } from '../../core/ports.js';

export type OpcuaSecurityMode = 'None' | 'Sign' | 'SignAndEncrypt';
/**
 * Policies that need RSA PKCS#1 v1.5 (Basic128Rsa15, Basic256) are left out on
 * purpose: Node 20 refuses that padding unless started with
 * --security-revert=CVE-2023-46809 (shared/SERVICES.md), and both policies are
 * deprecated by the OPC Foundation (OPC 10000-7, from memory).
 */
export type OpcuaSecurityPolicy = 'None' | 'Basic256Sha256' | 'Aes128_Sha256_RsaOaep' | 'Aes256_Sha256_RsaPss';
export const SECURITY_MODES: readonly OpcuaSecurityMode[] = ['None', 'Sign', 'SignAndEncrypt'];
export const SECURITY_POLICIES: readonly OpcuaSecurityPolicy[] = ['None', 'Basic256Sha256', 'Aes128_Sha256_RsaOaep', 'Aes256_Sha256_RsaPss'];

/** Node ids as strings, e.g. "ns=2;s=F1.Va.Mag". */
export type NodeIdText = string;
export interface PolarNodes {
  readonly mag: NodeIdText;
  readonly ang: NodeIdText;
}
export interface PhaseNodes<T> {
  readonly a: T;
  readonly b: T;
  readonly c: T;
}
export interface LineNodes {
  readonly ab: NodeIdText;
  readonly bc: NodeIdText;
  readonly ca: NodeIdText;
}

export interface PhasorFeederNodes {
  readonly v?: PhaseNodes<PolarNodes>;
  readonly i?: PhaseNodes<PolarNodes>;
  readonly freq?: NodeIdText;
}
export interface RmsFeederNodes {
  readonly vll?: LineNodes;
  readonly vln?: PhaseNodes<NodeIdText>;
  readonly i?: PhaseNodes<NodeIdText>;
  readonly freq?: NodeIdText;
}

interface FeederCommon {
  readonly id: string;
  /** Multipliers from the server's engineering units to primary V and A (e.g. 1000 for kV). Default 1. */
  readonly voltageScale?: number;
  readonly currentScale?: number;
}
export interface PhasorFeeder extends FeederCommon {
  readonly kind: 'phasor';
  readonly nodes: PhasorFeederNodes;
  /** Unit of the angle nodes. Default 'deg'. */
  readonly angleUnit?: 'deg' | 'rad';
}
export interface RmsFeeder extends FeederCommon {
  readonly kind: 'rms';
  readonly nodes: RmsFeederNodes;
}
export type OpcuaFeeder = PhasorFeeder | RmsFeeder;

export interface SourceLogger {
  info(msg: string): void;
  warn(msg: string): void;
}

export interface OpcuaSourceOptions {
  readonly endpointUrl: string;
  readonly securityMode: OpcuaSecurityMode;
  readonly securityPolicy: OpcuaSecurityPolicy;
  readonly user?: { readonly username: string; readonly password: string };
  /** PKI folder of this client (own/, trusted/, rejected/, issuers/). Required with Sign or SignAndEncrypt. */
  readonly certificateFolder?: string;
  /**
   * Trust a server certificate seen for the first time. Default false: the
   * certificate lands in <certificateFolder>/rejected and must be moved to
   * trusted/certs by an operator who has checked its thumbprint.
   */
  readonly acceptUnknownServerCertificate?: boolean;
  readonly samplingIntervalMs: number;
  readonly publishingIntervalMs: number;
  /** Items whose source timestamps lie within this many ms belong to one frame. Default 20. */
  readonly assemblyToleranceMs?: number;
  /** An incomplete group is dropped (and counted) once data this much newer has arrived. Default max(2000, 10 × publishing interval). */
  readonly incompleteAfterMs?: number;
  /** Per monitored item queue on the server, so bursts between publishes are not lost. Default 10. */
  readonly queueSize?: number;
  readonly feeders: readonly OpcuaFeeder[];
  readonly reconnect: { readonly minMs: number; readonly maxMs: number };
  readonly logger?: SourceLogger;
  readonly onState?: (status: SourceStatus) => void;
}

function fail(path: string, message: string): never {
  throw new AgentError('SRC_CONFIG', `opcua.${path}: ${message}`, { details: { path: `opcua.${path}` } });
}

function positive(path: string, x: unknown, allowZero = false): void {
  if (typeof x !== 'number' || !Number.isFinite(x) || x < 0 || (!allowZero && x === 0)) fail(path, `must be a ${allowZero ? 'non-negative' : 'positive'} number of ms, found ${String(x)}`);
}

function nodeId(path: string, x: unknown): void {
  if (typeof x !== 'string' || x.trim() === '') fail(path, `must be a node id such as "ns=2;s=F1.Va", found ${JSON.stringify(x)}`);
}

/** Checks the options; throws SRC_CONFIG naming the first bad option. */
export function validateOpcuaOptions(o: OpcuaSourceOptions): void {
  if (typeof o.endpointUrl !== 'string' || !/^opc\.tcp:\/\/[^/\s]+/.test(o.endpointUrl)) fail('endpointUrl', `must be an opc.tcp://host:port URL, found ${JSON.stringify(o.endpointUrl)}`);
  if (!SECURITY_MODES.includes(o.securityMode)) fail('securityMode', `must be one of ${SECURITY_MODES.join(', ')}, found ${JSON.stringify(o.securityMode)}`);
  if (!SECURITY_POLICIES.includes(o.securityPolicy)) {
    const hint = o.securityPolicy === ('Basic128Rsa15' as string) || o.securityPolicy === ('Basic256' as string) ? ' (it needs RSA PKCS#1 v1.5, refused by Node 20; use Basic256Sha256)' : '';
    fail('securityPolicy', `must be one of ${SECURITY_POLICIES.join(', ')}, found ${JSON.stringify(o.securityPolicy)}${hint}`);
  }
  if ((o.securityMode === 'None') !== (o.securityPolicy === 'None')) {
    fail('securityPolicy', `securityMode ${o.securityMode} cannot be used with securityPolicy ${o.securityPolicy}: use None with None, or Sign/SignAndEncrypt with a real policy (Basic256Sha256 preferred)`);
  }
  if (o.securityMode !== 'None' && (typeof o.certificateFolder !== 'string' || o.certificateFolder === '')) {
    fail('certificateFolder', `is required with securityMode ${o.securityMode}: the folder that holds this client's certificate and the trusted server certificates`);
  }
  if (o.user !== undefined && (typeof o.user.username !== 'string' || o.user.username === '' || typeof o.user.password !== 'string')) fail('user', 'needs a non-empty username and a password');
  positive('samplingIntervalMs', o.samplingIntervalMs, true);
  positive('publishingIntervalMs', o.publishingIntervalMs);
  if (o.assemblyToleranceMs !== undefined) positive('assemblyToleranceMs', o.assemblyToleranceMs, true);
  if (o.incompleteAfterMs !== undefined) positive('incompleteAfterMs', o.incompleteAfterMs);
  if (o.queueSize !== undefined && (!Number.isInteger(o.queueSize) || o.queueSize < 1)) fail('queueSize', `must be a whole number >= 1, found ${String(o.queueSize)}`);
  positive('reconnect.minMs', o.reconnect?.minMs);
  positive('reconnect.maxMs', o.reconnect?.maxMs);
  if (o.reconnect.maxMs < o.reconnect.minMs) fail('reconnect.maxMs', `(${o.reconnect.maxMs}) must not be below reconnect.minMs (${o.reconnect.minMs})`);
  if (!Array.isArray(o.feeders) || o.feeders.length === 0) fail('feeders', 'needs at least one feeder');
  const seen = new Set<string>();
  o.feeders.forEach((f, k) => {
    const p = `feeders[${k}]`;
    if (typeof f.id !== 'string' || !FEEDER_ID_PATTERN.test(f.id)) fail(`${p}.id`, `must match [A-Za-z0-9_.-]{1,64}, found ${JSON.stringify(f.id)}`);
    if (seen.has(f.id)) fail(`${p}.id`, `feeder "${f.id}" is configured twice`);
    seen.add(f.id);
    for (const s of ['voltageScale', 'currentScale'] as const) {
      const x = f[s];
      if (x !== undefined && (typeof x !== 'number' || !Number.isFinite(x) || x <= 0)) fail(`${p}.${s}`, `must be a positive number, found ${String(x)}`);
    }
    const n = f.nodes as Record<string, unknown> | undefined;
    if (n === undefined || n === null || typeof n !== 'object') fail(`${p}.nodes`, 'is required');
    if (f.kind === 'phasor') {
      const nodes = f.nodes;
      if (nodes.v === undefined && nodes.i === undefined) fail(`${p}.nodes`, 'a phasor feeder needs v and/or i nodes');
      for (const q of ['v', 'i'] as const) {
        const set = nodes[q];
        if (set === undefined) continue;
        for (const ph of ['a', 'b', 'c'] as const) {
          nodeId(`${p}.nodes.${q}.${ph}.mag`, set[ph]?.mag);
          nodeId(`${p}.nodes.${q}.${ph}.ang`, set[ph]?.ang);
        }
      }
      if (f.angleUnit !== undefined && f.angleUnit !== 'deg' && f.angleUnit !== 'rad') fail(`${p}.angleUnit`, `must be deg or rad, found ${JSON.stringify(f.angleUnit)}`);
      const extra = Object.keys(nodes).filter((key) => !['v', 'i', 'freq'].includes(key));
      if (extra.length > 0) fail(`${p}.nodes.${extra[0]}`, 'is not a phasor node set (v, i, freq); did you mean kind: rms?');
    } else if (f.kind === 'rms') {
      const nodes = f.nodes;
      if (nodes.vll === undefined && nodes.vln === undefined && nodes.i === undefined) fail(`${p}.nodes`, 'an rms feeder needs vll, vln and/or i nodes');
      if (nodes.vll !== undefined) for (const pair of ['ab', 'bc', 'ca'] as const) nodeId(`${p}.nodes.vll.${pair}`, nodes.vll[pair]);
      for (const q of ['vln', 'i'] as const) {
        const set = nodes[q];
        if (set !== undefined) for (const ph of ['a', 'b', 'c'] as const) nodeId(`${p}.nodes.${q}.${ph}`, set[ph]);
      }
      const extra = Object.keys(nodes).filter((key) => !['vll', 'vln', 'i', 'freq'].includes(key));
      if (extra.length > 0) fail(`${p}.nodes.${extra[0]}`, 'is not an rms node set (vll, vln, i, freq); did you mean kind: phasor?');
    } else {
      fail(`${p}.kind`, `must be phasor or rms, found ${JSON.stringify((f as { kind: unknown }).kind)}`);
    }
    if (f.nodes.freq !== undefined) nodeId(`${p}.nodes.freq`, f.nodes.freq);
  });
}
