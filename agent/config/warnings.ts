/**
 * Things that are valid but worth a second look, reported by
 * `seqmon check-config` and logged at start-up. None of them stops seqmon.
 */
import { DEFAULT_DETECTION } from '../core/detect/settings.js';
import { isLoopback } from './load-config.js';
import type { SeqmonConfig } from './types.js';

export function configWarnings(c: SeqmonConfig): string[] {
  const w: string[] = [];
  const publicHttp = c.http.enabled && !isLoopback(c.http.host);
  if (publicHttp && c.http.tls === null && !c.http.acknowledgeInsecureBind) {
    w.push(`http.host ${c.http.host} is not loopback and has neither http.tls nor http.acknowledgeInsecureBind: seqmon will refuse to start (API_INSECURE_BIND)`);
  }
  if (publicHttp && c.http.token === null) w.push(`http.host ${c.http.host} is reachable from the network but no http.tokenEnv is set: anyone who can reach it can read the API`);
  if (c.mqtt.tls !== null && !c.mqtt.tls.rejectUnauthorized) w.push('mqtt.tls.rejectUnauthorized is false: the broker certificate is not verified');
  if (c.mqtt.enabled && /^(mqtt|tcp|ws):/.test(c.mqtt.url) && c.mqtt.password !== null && !isLoopback(new URL(c.mqtt.url).hostname)) {
    w.push('the MQTT password is sent without TLS to a non-loopback broker; use mqtts://');
  }
  if (c.opcua.enabled && c.opcua.securityMode === 'None') w.push('opcua.securityMode is None: values and credentials cross the network unprotected');
  if (c.store.kind === 'influx' && c.store.url !== null && c.store.url.startsWith('http:') && c.store.password !== null && !isLoopback(new URL(c.store.url).hostname)) {
    w.push('the InfluxDB password is sent without TLS to a non-loopback server; use https://');
  }
  const placeholder = DEFAULT_DETECTION.fault.pickupA;
  const defaultFault = c.feeders.list.filter((f) => f.detection.fault.enabled && f.detection.fault.pickupA === placeholder).map((f) => f.id);
  if (defaultFault.length > 0) w.push(`detection.fault.pickupA is the ${placeholder} A placeholder for ${defaultFault.join(', ')}: set it from the feeder's protection study`);
  return w;
}
