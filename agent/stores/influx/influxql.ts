/**
 * InfluxQL quoting (InfluxQL reference, "Identifiers" and "Literals"):
 * identifiers in double quotes with `"` and `\` escaped, string literals in
 * single quotes with `'` and `\` escaped. Written here rather than taken from
 * the influx package, whose string-literal escaper leaves backslashes alone.
 */
export function ident(name: string): string {
  return `"${name.replace(/["\\]/g, (c) => `\\${c}`)}"`;
}

export function stringLit(value: string): string {
  return `'${value.replace(/['\\]/g, (c) => `\\${c}`)}'`;
}

/** InfluxDB 1.x holds times from 1677 to 2262 (int64 nanoseconds, +-9.22e18 ns = +-9.22e12 ms); bounds kept inside that. */
const TIME_LIMIT_MS = 9_000_000_000_000;

/** `time >= FROMms` with `from` rounded up to a whole millisecond and clamped to the storable range. */
export function msLiteral(ms: number): string {
  const clamped = Math.min(TIME_LIMIT_MS, Math.max(-TIME_LIMIT_MS, Math.ceil(ms)));
  return `${clamped}ms`;
}

/** "db"."rp"."measurement" */
export function source(db: string, rp: string, measurement: string): string {
  return `${ident(db)}.${ident(rp)}.${ident(measurement)}`;
}
