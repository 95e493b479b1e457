/**
 * Line protocol and InfluxQL quoting. Rules from the InfluxDB 1.x line
 * protocol reference ("Special characters": tag keys/values escape comma,
 * equals sign and space; string field values escape double quote and
 * backslash; integers carry an `i` suffix) and the InfluxQL reference
 * ("Identifiers", "Literals") - from memory, and checked end to end against a
 * real influxd in test/integration/influx-store.test.ts.
 */
import { describe, expect, test } from 'vitest';
import { msLiteral, ident, stringLit, source } from '../../../agent/stores/influx/influxql.js';
import { alarmLine, escapeTag, eventLine, LineBatch, quoteField, sequenceLine } from '../../../agent/stores/influx/line-protocol.js';
import { alarm, disturbance, fullResult, hollowResult, sparseResult } from '../../contracts/trend-store-fixtures.js';

describe('line protocol encoding', () => {
  test('writes a result as measurement sequence with feeder and window tags, leaving null fields out', () => {
    const line = sequenceLine(sparseResult('F1', '3s', 1_764_000_000_000));
    expect(line).toBe(
      'sequence,feeder=F1,window=3s duration_ms=3000,flagged=true,count=1i,has_v=true,has_i=false,' +
        'v_pos_mag=7190.4,v_neg_mag=94.2,v_u2=1.31,v_rms_ab=12470.2,v_rms_bc=12391,v_rms_ca=12440.7,v_lvur=0.37 1764000000000',
    );
  });

  test('keeps a quantity that is present but empty visible through has_v / has_i', () => {
    expect(sequenceLine(hollowResult('F1', '2h', 0))).toBe('sequence,feeder=F1,window=2h duration_ms=0,freq=50,flagged=false,count=0i,has_v=true,has_i=true 0');
  });

  test('writes the timestamp as whole milliseconds', () => {
    expect(sequenceLine(sparseResult('F1', '3s', 1_764_000_000_000.6)).endsWith(' 1764000000001')).toBe(true);
  });

  test('writes an alarm with condition and feeder tags and quoted string fields, leaving null value and limit out', () => {
    const a = alarm('F1', 5, { value: null, limit: null, phase: 'c', message: 'say "open" \\ check' });
    expect(alarmLine(a)).toBe('alarm,condition=voltage-unbalance,feeder=F1 state="raised",level="warning",phase="c",message="say \\"open\\" \\\\ check" 5');
  });

  test('writes an event with feeder and type tags', () => {
    expect(eventLine(disturbance('F2', 7, { message: 'm' }))).toBe(
      'event,feeder=F2,type=AG duration_ms=83.5,peak_current=2150.25,peak_phase="a",i0_over_i1=0.91,message="m" 7',
    );
  });

  test('escapes comma, equals sign, space and backslash in tag values', () => {
    expect(escapeTag('a b,c=d\\e')).toBe('a\\ b\\,c\\=d\\\\e');
  });

  test('escapes double quotes and backslashes in string fields and keeps newlines', () => {
    expect(quoteField('x"y\\z\nw')).toBe('"x\\"y\\\\z\nw"');
  });
});

describe('InfluxQL quoting', () => {
  test('quotes identifiers in double quotes, escaping double quote and backslash', () => {
    expect(ident('my"db\\x')).toBe('"my\\"db\\\\x"');
    expect(source('db', 'trend_3s', 'sequence')).toBe('"db"."trend_3s"."sequence"');
  });

  test('quotes string literals in single quotes, escaping single quote and backslash', () => {
    expect(stringLit("F1' OR 1=1 --\\")).toBe("'F1\\' OR 1=1 --\\\\'");
  });

  test('writes time bounds as whole milliseconds rounded up, so ts >= from keeps its meaning', () => {
    expect(msLiteral(1000.2)).toBe('1001ms');
    expect(msLiteral(1000)).toBe('1000ms');
  });

  test('clamps time bounds to the range InfluxDB can hold (int64 nanoseconds)', () => {
    expect(msLiteral(Number.MAX_SAFE_INTEGER)).toBe('9000000000000ms');
    expect(msLiteral(-Infinity)).toBe('-9000000000000ms');
  });
});

describe('a write request body built as bytes', () => {
  test('is the lines joined by newlines, each line as sequenceLine / alarmLine write it', () => {
    const results = [fullResult('F1', '3s', 1_764_000_000_000, 0), sparseResult('F2', '3s', 1_764_000_003_000), hollowResult('F3', '3s', 1_764_000_006_000)];
    const batch = new LineBatch(256);
    for (const r of results) batch.addSequence(r);
    const a = alarm('F1', 5, { message: 'u2 3.1 % ≥ 3 % – check the lateral fuses' });
    batch.addText(alarmLine(a));
    const expected = [...results.map((r) => sequenceLine(r)), alarmLine(a)];
    expect(batch.count).toBe(4);
    expect(Buffer.from(batch.body()).toString('utf8')).toBe(expected.join('\n'));
    expect(batch.lines()).toEqual(expected);
  });

  test('writes text that is not ASCII as UTF-8, in tag values too', () => {
    const batch = new LineBatch(256);
    batch.addSequence(hollowResult('Süd 1', '2h', 0));
    expect(Buffer.from(batch.body()).toString('utf8')).toBe('sequence,feeder=Süd\\ 1,window=2h duration_ms=0,freq=50,flagged=false,count=0i,has_v=true,has_i=true 0');
  });

  test('grows past its starting size without losing a byte', () => {
    const batch = new LineBatch(256);
    const lines: string[] = [];
    for (let k = 0; k < 500; k++) {
      const r = fullResult(`F${k % 7}`, '3s', 1_764_000_000_000 + 3000 * k, k);
      batch.addSequence(r);
      lines.push(sequenceLine(r));
    }
    expect(batch.byteLength).toBe(Buffer.byteLength(lines.join('\n')));
    expect(batch.lines()).toEqual(lines);
  });
});
