/**
 * The service reading a feeder from a real (in-process) OPC UA server through
 * the configuration file's node mapping, as an operator would set it up:
 * magnitude/angle nodes per phase become phasor frames whose sequence values
 * reach the HTTP API.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { parseConfigText } from '../../agent/config/load-config.js';
import { createLogger } from '../../agent/logging.js';
import { SeqmonService } from '../../agent/main.js';
import { freePort, waitFor } from '../helpers/free-port.js';
import { Teardown } from '../helpers/teardown.js';
import { startOpcuaTestServer } from './opcua-server-fixture.js';

const td = new Teardown();
afterEach(() => td.run());

const PH = ['a', 'b', 'c'] as const;
const NODES = PH.flatMap((p) => [`Q7.V${p}.mag`, `Q7.V${p}.ang`, `Q7.I${p}.mag`, `Q7.I${p}.ang`]);

describe('the service with an OPC UA source', () => {
  it('maps configured magnitude/angle nodes to a feeder and serves its sequence values', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'seqmon-opcua-service-'));
    td.add(() => rmSync(dir, { recursive: true, force: true }));
    const server = await startOpcuaTestServer({ port: await freePort(), pkiDir: join(dir, 'server-pki'), nodes: NODES });
    td.add(() => server.stop());
    const httpPort = await freePort();
    const node = (name: string): string => `"ns=1;s=${name}"`;
    const phasors = (q: 'V' | 'I'): string => PH.map((p) => `        ${p}: { magnitude: ${node(`Q7.${q}${p}.mag`)}, angle: ${node(`Q7.${q}${p}.ang`)} }`).join('\n');
    const yaml = `
dataDir: ${dir}
mqtt: { enabled: false }
http: { port: ${httpPort} }
opcua:
  enabled: true
  endpointUrl: ${server.endpointUrl}
  securityMode: None
  securityPolicy: None
  samplingIntervalMs: 50
  feeders:
    - id: Q7
      kind: phasor
      v:
${phasors('V')}
      i:
${phasors('I')}
feeders:
  discover: false
  list:
    - { id: Q7, nominalVoltageLN: 7200 }
`;
    const config = parseConfigText(yaml, null, {}, dir);
    const service = await SeqmonService.start(config, { logger: createLogger({ level: 'silent' }), dashboardDir: null });
    td.add(() => service.close());

    // A phase-c magnitude 10 % low: u2 = u0 = 100·0.1/(3 − 0.1) = 3.448 % (check vector single-phase-magnitude-sag-10pct, computed with mathjs).
    const v = [7200, 7200, 6480], va = [0, -120, 120];
    let written = 0;
    await waitFor(async () => {
      const ts = Date.now();
      PH.forEach((p, j) => {
        server.set(`Q7.V${p}.mag`, v[j]!, ts);
        server.set(`Q7.V${p}.ang`, va[j]!, ts);
        server.set(`Q7.I${p}.mag`, 150, ts);
        server.set(`Q7.I${p}.ang`, va[j]! - 30, ts);
      });
      written++;
      const res = await fetch(`http://127.0.0.1:${httpPort}/api/feeders/Q7/latest`);
      if (res.status !== 200) return false;
      const body = (await res.json()) as { result: { v: { u2: number; u0: number } } | null };
      return body.result !== null && Math.abs(body.result.v.u2 - 3.448276) < 1e-4;
    }, 20_000, 200);
    expect(written).toBeGreaterThan(0);
    const latest = (await (await fetch(`http://127.0.0.1:${httpPort}/api/feeders/Q7/latest`)).json()) as { result: { v: { u0: number }; i: { u2: number } } };
    expect(latest.result.v.u0).toBeCloseTo(3.448276, 4);
    expect(latest.result.i.u2).toBeCloseTo(0, 6);
  }, 60_000);
});
