import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, describe, expect, test } from 'vitest';
import { Spool, type SpooledPoint } from '../../../agent/stores/spool/spool.js';
import { Teardown } from '../../helpers/teardown.js';

const dir = mkdtempSync(join(tmpdir(), 'seqmon-spool-'));
let n = 0;
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const pts = (from: number, count: number, target = 'trend_3s'): SpooledPoint[] =>
  Array.from({ length: count }, (_, k) => ({ target, line: `sequence,feeder=F1,window=3s count=1i ${from + k}` }));
const stamps = (entries: { line: string }[]): number[] => entries.map((e) => Number(e.line.split(' ').pop()));

describe('store-and-forward spool', () => {
  const teardown = new Teardown();
  afterEach(() => teardown.run());
  function open(capacity = 100, path = join(dir, `spool-${++n}.db`)): Spool {
    const s = new Spool({ path, capacity });
    teardown.add(() => s.close());
    return s;
  }

  test('returns queued points oldest first across appends, with their targets', () => {
    const s = open();
    s.append(pts(1, 3));
    s.append(pts(4, 2, 'records'));
    const head = s.peek(10);
    expect(stamps(head)).toEqual([1, 2, 3, 4, 5]);
    expect(head.map((e) => e.target)).toEqual(['trend_3s', 'trend_3s', 'trend_3s', 'records', 'records']);
    expect(s.size).toBe(5);
  });

  test('removes a delivered prefix and keeps the rest in order', () => {
    const s = open();
    s.append(pts(1, 5));
    const first = s.peek(2);
    s.remove(first[0].id, first[1].id);
    expect(s.size).toBe(3);
    expect(stamps(s.peek(10))).toEqual([3, 4, 5]);
  });

  test('keeps queued points across close and reopen of its file', () => {
    const path = join(dir, `spool-${++n}.db`);
    const a = new Spool({ path, capacity: 100 });
    a.append(pts(1, 4));
    a.close();
    const b = open(100, path);
    expect(b.size).toBe(4);
    expect(stamps(b.peek(10))).toEqual([1, 2, 3, 4]);
  });

  test('drops the oldest points when an append would pass the capacity, and counts them', () => {
    const s = open(5);
    s.append(pts(1, 4));
    expect(s.append(pts(5, 3))).toEqual({ dropped: 2 });
    expect(stamps(s.peek(10))).toEqual([3, 4, 5, 6, 7]);
    expect(s.size).toBe(5);
    expect(s.dropped).toBe(2);
  });

  test('keeps only the newest points of a batch larger than the whole capacity', () => {
    const s = open(3);
    s.append(pts(1, 2));
    expect(s.append(pts(3, 5))).toEqual({ dropped: 4 });
    expect(stamps(s.peek(10))).toEqual([5, 6, 7]);
  });

  test('keeps its dropped count across a reopen', () => {
    const path = join(dir, `spool-${++n}.db`);
    const a = new Spool({ path, capacity: 2 });
    a.append(pts(1, 5));
    a.close();
    expect(open(2, path).dropped).toBe(3);
  });

  test('counts right when points of a peeked range were dropped before the range was removed', () => {
    const s = open(4);
    s.append(pts(1, 4));
    const inFlight = s.peek(4);
    s.append(pts(5, 2)); // drops 1 and 2 while 1..4 are being delivered
    s.remove(inFlight[0].id, inFlight[3].id);
    expect(s.size).toBe(2);
    expect(stamps(s.peek(10))).toEqual([5, 6]);
  });

  test('refuses a capacity below one point with STORE_OPEN_FAILED', () => {
    expect(() => open(0)).toThrow(expect.objectContaining({ code: 'STORE_OPEN_FAILED' }));
  });

  test('refuses appends after close with STORE_WRITE_FAILED', () => {
    const s = open();
    s.close();
    expect(() => s.append(pts(1, 1))).toThrow(expect.objectContaining({ code: 'STORE_WRITE_FAILED' }));
  });
});
