// Instants and dates beyond years 0..9999: ISO-8601 expanded years (±YYYYYY, the form ECMA-262
// §21.4.1.32 gives Date.prototype.toISOString), and a plain count where no Date can hold the value.
// The day counts start from a fact of the Arrow gold files (arrow-testing generated_datetime:
// date64 253402214400000 ms is 9999-12-31); the oracle for other days is Date's own UTC calendar.

import { describe, expect, it } from 'vitest';
import { DateDay, DateMillisecond, TimeUnit, TimestampMillisecond, TimestampSecond, makeData, type DataType } from 'apache-arrow';
import { columnValue, isoDay, isoInstant } from '../../../../src/engine/sources/columnar/toJson.js';

const LAST_DAY_9999_MS = 253402214400000; // 9999-12-31 (arrow-testing generated_datetime, date64)
const DAY = 86_400_000;

function utcMs(year: number, month: number, day: number): number {
  const d = new Date(0);
  d.setUTCFullYear(year, month - 1, day);
  return d.getTime();
}

function one(type: DataType, data: BigInt64Array | Int32Array): unknown {
  const ctx = { unsafe: [] };
  return columnValue(makeData({ type, length: 1, nullCount: 0, data } as never), 0, 'v', ctx);
}

describe('years beyond 0..9999', () => {
  it('the oracle agrees with the gold file on 9999-12-31', () => {
    expect(utcMs(9999, 12, 31)).toBe(LAST_DAY_9999_MS);
  });

  it('a timestamp one day after 9999-12-31 keeps its seconds: +010000-01-01T00:00:00', () => {
    const secs = BigInt((LAST_DAY_9999_MS + DAY) / 1000);
    expect(one(new TimestampSecond(), BigInt64Array.of(secs))).toBe('+010000-01-01T00:00:00');
    expect(one(new TimestampSecond('UTC'), BigInt64Array.of(secs + 61n))).toBe('+010000-01-01T00:01:01Z');
    expect(isoInstant(secs * 1_000_000n + 5n, TimeUnit.MICROSECOND, false)).toBe('+010000-01-01T00:00:00.000005');
  });

  it('years before 0 use the expanded form with a minus sign', () => {
    const ms = utcMs(-1, 1, 1) + 1234;
    expect(one(new TimestampMillisecond(), BigInt64Array.of(BigInt(ms)))).toBe('-000001-01-01T00:00:01.234');
    expect(one(new DateMillisecond(), BigInt64Array.of(BigInt(utcMs(-1, 1, 1))))).toBe('-000001-01-01');
  });

  it('date32 beyond 9999 gives its expanded date; beyond what a Date holds, the count of days', () => {
    const days = (LAST_DAY_9999_MS + DAY) / DAY;
    expect(one(new DateDay(), Int32Array.of(days))).toBe('+010000-01-01');
    expect(one(new DateDay(), Int32Array.of(2_000_000_000))).toBe('2000000000 (days since epoch)');
    expect(one(new DateDay(), Int32Array.of(-2_000_000_000))).toBe('-2000000000 (days since epoch)');
    expect(isoDay(0)).toBe('1970-01-01');
  });

  it('instants within 0..9999 keep the plain form', () => {
    expect(one(new TimestampMillisecond(), BigInt64Array.of(BigInt(LAST_DAY_9999_MS + 1)))).toBe('9999-12-31T00:00:00.001');
    expect(one(new DateDay(), Int32Array.of(-719162))).toBe('0001-01-01'); // arrow-testing generated_datetime date32 minimum
  });
});
