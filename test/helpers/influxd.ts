/**
 * A private influxd for integration tests (see influxd-process.mjs, shared
 * with the benchmarks). `hasInfluxd` is false only when the binary is not
 * installed; tests skip on that alone, never because a server misbehaves.
 */
import { influxdInstalled, startInfluxd, type InfluxdHandle } from './influxd-process.mjs';

export { startInfluxd, type InfluxdHandle };
export const hasInfluxd: boolean = influxdInstalled();

/** Runs one InfluxQL statement against the server (for checks independent of the store under test). */
export async function influxQuery(url: string, db: string, q: string): Promise<unknown> {
  const res = await fetch(`${url}/query?db=${encodeURIComponent(db)}&epoch=ms&q=${encodeURIComponent(q)}`);
  if (res.status !== 200) throw new Error(`InfluxDB answered ${res.status}: ${await res.text()}`);
  return res.json();
}
