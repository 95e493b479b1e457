/**
 * An in-process node-opcua server for the OPC UA source tests: loopback only,
 * a free port, its own PKI folder under a temp dir, and Double variables whose
 * values the test writes with explicit source timestamps. Node names describe a
 * fictional feeder.
 */
import {
  DataType,
  MessageSecurityMode,
  OPCUACertificateManager,
  OPCUAServer,
  SecurityPolicy,
  StatusCode,
  StatusCodes,
  type UAVariable,
} from 'node-opcua';

export interface TestServerOptions {
  port: number;
  pkiDir: string;
  nodes: readonly string[];
  /** When set: only Sign or SignAndEncrypt with Basic256Sha256 or Aes256_Sha256_RsaPss, user name and password; otherwise None/anonymous. */
  secure?: { username: string; password: string };
}

export interface TestServer {
  readonly endpointUrl: string;
  /** Writes a value with a source timestamp (epoch ms) to the node named `name` (node id ns=1;s=<name>). */
  set(name: string, value: number, sourceTs: number, status?: StatusCode): void;
  stop(): Promise<void>;
}

export async function startOpcuaTestServer(o: TestServerOptions): Promise<TestServer> {
  const certificateManager = new OPCUACertificateManager({ rootFolder: o.pkiDir, automaticallyAcceptUnknownCertificate: true });
  await certificateManager.initialize();
  const server = new OPCUAServer({
    port: o.port,
    hostname: '127.0.0.1',
    alternateHostname: ['127.0.0.1'],
    serverCertificateManager: certificateManager,
    securityPolicies: o.secure === undefined ? [SecurityPolicy.None] : [SecurityPolicy.Basic256Sha256, SecurityPolicy.Aes256_Sha256_RsaPss],
    securityModes: o.secure === undefined ? [MessageSecurityMode.None] : [MessageSecurityMode.SignAndEncrypt, MessageSecurityMode.Sign],
    allowAnonymous: o.secure === undefined,
    userManager: {
      isValidUser: (username: string, password: string) => o.secure !== undefined && username === o.secure.username && password === o.secure.password,
    },
  });
  await server.initialize();
  const addressSpace = server.engine.addressSpace!;
  const ns = addressSpace.getOwnNamespace();
  const folder = ns.addFolder(addressSpace.rootFolder.objects, { browseName: 'FictionalFeeders' });
  const vars = new Map<string, UAVariable>();
  for (const name of o.nodes) {
    // No value getter, so no minimumSamplingInterval is needed; 0 lets the server report every change.
    const v = ns.addVariable({ organizedBy: folder, nodeId: `s=${name}`, browseName: name, dataType: 'Double', minimumSamplingInterval: 0 });
    vars.set(name, v);
  }
  await server.start();
  return {
    endpointUrl: `opc.tcp://127.0.0.1:${o.port}`,
    set(name, value, sourceTs, status = StatusCodes.Good) {
      const v = vars.get(name);
      if (v === undefined) throw new Error(`no test node ${name}`);
      v.setValueFromSource({ dataType: DataType.Double, value }, status, new Date(sourceTs));
    },
    async stop() {
      await server.shutdown(0);
      await certificateManager.dispose();
    },
  };
}
