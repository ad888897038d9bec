// Expected values from Arrow integration JSON format (arrow-testing gold files), compared with the
// JSON our columnar sources give for the same value.
//
// The layout read here is taken from the gold files themselves (../shared/testdata/arrow/ipc-stream,
// SOURCES.md): a column holds `count`, `VALIDITY` (1 = value present), `DATA`, `OFFSET`, `SIZE`,
// `TYPE_ID`, `VIEWS` + `VARIADIC_DATA_BUFFERS`, and `children` in the order of the field's children;
// a dictionary-encoded column holds indices in `DATA`, decoded through `dictionaries[id].data.columns[0]`.
// Conventions taken from memory of the format, not from the files, are marked "from memory".
//
// Our side of each comparison follows the conventions written at the top of
// src/engine/sources/columnar/toJson.ts (64-bit integers beyond ±(2^53−1) and decimals as strings,
// instants as ISO-8601 exact to their unit, binary as a length plus a hex preview).
// Every type gets a comparison; a type without one throws, so the case fails.

export interface JType {
  name: string;
  bitWidth?: number;
  isSigned?: boolean;
  precision?: string | number;
  scale?: number;
  unit?: string;
  timezone?: string;
  byteWidth?: number;
  listSize?: number;
  mode?: string;
  typeIds?: number[];
}
export interface JField {
  name: string;
  type: JType;
  dictionary?: { id: number; indexType: JType };
  children?: JField[];
}
export interface JView {
  SIZE: number;
  INLINED?: string;
  PREFIX_HEX?: string;
  BUFFER_INDEX?: number;
  OFFSET?: number;
}
export interface JColumn {
  name: string;
  count: number;
  VALIDITY?: number[];
  DATA?: unknown[];
  OFFSET?: (number | string)[];
  SIZE?: (number | string)[];
  TYPE_ID?: number[];
  VIEWS?: JView[];
  VARIADIC_DATA_BUFFERS?: string[];
  children?: JColumn[];
}
export interface JDoc {
  schema: { fields: JField[] };
  batches: { count: number; columns: JColumn[] }[];
  dictionaries?: { id: number; data: { count: number; columns: JColumn[] } }[];
}

/**
 * JSON.parse keeping integers of 16 or more digits exact (as strings): the gold files print some
 * 64-bit values as JSON numbers (interval MONTH_DAY_NANO nanoseconds), which a double would round.
 * The string alternative comes first, so digits inside string values are left alone.
 */
export function parseGold(text: string): JDoc {
  const lossless = text.replace(/"(?:[^"\\]|\\.)*"|(?<![\d.eE+-])-?\d{16,}(?![\d.eE])/g, (m) => (m[0] === '"' ? m : `"${m}"`));
  return JSON.parse(lossless) as JDoc;
}

/** Checks our value at position `i` of a gold column; throws a message naming the place when they differ. */
export type Expect = (ours: unknown, i: number, path: string) => void;

/** RFC 8259 §6: integers in ±(2^53−1) interoperate exactly; beyond that our sources give strings. */
const SAFE = BigInt(Number.MAX_SAFE_INTEGER);

class Mismatch extends Error {}

function differ(path: string, want: unknown, got: unknown): never {
  throw new Mismatch(`${path}: expected ${typeof want === 'string' ? want : JSON.stringify(want)}, got ${JSON.stringify(got)}`);
}

function big(x: unknown): bigint {
  return BigInt(String(x));
}

/** An integer as our sources write it: a JSON number in the safe range, else its decimal string. */
function expectInteger(gold: unknown, ours: unknown, p: string): void {
  const g = big(gold);
  if (g <= SAFE && g >= -SAFE) {
    if (typeof ours !== 'number' || BigInt(ours) !== g) differ(p, `the number ${g}`, ours);
  } else if (ours !== g.toString()) {
    differ(p, `the string "${g}"`, ours);
  }
}

const UNIT_DIGITS: Record<string, number> = { SECOND: 0, MILLISECOND: 3, MICROSECOND: 6, NANOSECOND: 9 };
const UNIT_ABBR: Record<string, string> = { SECOND: 's', MILLISECOND: 'ms', MICROSECOND: 'us', NANOSECOND: 'ns' };

/**
 * An ISO-8601 date or date-time (years as YYYY or the expanded ±YYYYYY form, ECMA-262 §21.4.1.32)
 * back to a count of `unit` since 1970-01-01T00:00:00, with the digits of its fraction and its zone mark.
 */
function isoToCount(text: string, unit: string): { count: bigint; fracDigits: number; zulu: boolean; dateOnly: boolean } | null {
  const m = /^([+-]\d{6}|\d{4})-(\d{2})-(\d{2})(?:T(\d{2}):(\d{2}):(\d{2})(?:\.(\d+))?)?(Z)?$/.exec(text);
  if (!m) return null;
  const d = new Date(0);
  d.setUTCFullYear(Number(m[1]), Number(m[2]) - 1, Number(m[3]));
  d.setUTCHours(Number(m[4] ?? 0), Number(m[5] ?? 0), Number(m[6] ?? 0), 0);
  if (Number.isNaN(d.getTime())) return null;
  const digits = UNIT_DIGITS[unit];
  const frac = m[7] ?? '';
  const count = (BigInt(d.getTime()) / 1000n) * 10n ** BigInt(digits) + (frac ? BigInt(frac.padEnd(digits, '0').slice(0, digits)) : 0n);
  return { count, fracDigits: frac.length, zulu: m[8] === 'Z', dateOnly: m[4] === undefined };
}

/** An instant given as a count of `unit`: ISO-8601 exact to the unit, `Z` when the type has a time zone. */
function expectInstant(gold: unknown, ours: unknown, p: string, unit: string, zoned: boolean): void {
  const g = big(gold);
  if (typeof ours !== 'string') differ(p, `an ISO-8601 instant for ${g} ${UNIT_ABBR[unit]}`, ours);
  // Beyond what a Date holds (±8.64e15 ms), our sources keep the count with its unit.
  const raw = /^(-?\d+) \((s|ms|us|ns) since epoch\)$/.exec(ours);
  if (raw) {
    if (big(raw[1]) !== g || raw[2] !== UNIT_ABBR[unit]) differ(p, `${g} ${UNIT_ABBR[unit]} since epoch`, ours);
    return;
  }
  const parsed = isoToCount(ours, unit);
  if (!parsed || parsed.dateOnly || parsed.count !== g) differ(p, `the instant ${g} ${UNIT_ABBR[unit]} since epoch`, ours);
  if (parsed.fracDigits !== UNIT_DIGITS[unit]) differ(p, `${UNIT_DIGITS[unit]} fraction digits (exact to the unit)`, ours);
  if (parsed.zulu !== zoned) differ(p, zoned ? 'a UTC instant ending in Z (the type has a time zone)' : 'a wall-clock time without Z (the type has no time zone)', ours);
}

/** Our binary preview: `<N bytes: first-16-bytes-hex…>` (toJson.ts); compared on length, shown bytes and the ellipsis. */
function expectBinary(goldHex: string, ours: unknown, p: string): void {
  if (!/^([0-9A-Fa-f]{2})*$/.test(goldHex)) throw new Error(`${p}: the gold value ${goldHex} is not hex`);
  const len = goldHex.length / 2;
  const m = typeof ours === 'string' ? /^<(\d+) bytes(?:: ([0-9a-f]+)(…)?)?>$/.exec(ours) : null;
  if (!m) differ(p, `a binary preview of ${len} bytes`, ours);
  const shown = goldHex.slice(0, 32).toLowerCase();
  if (Number(m[1]) !== len || (m[2] ?? '') !== shown || (m[3] !== undefined) !== len > 16) differ(p, `${len} bytes starting ${shown}${len > 16 ? '…' : ''}`, ours);
}

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function need<T>(x: T | undefined, what: string, col: JColumn): T {
  if (x === undefined) throw new Error(`gold column ${col.name} has no ${what}`);
  return x;
}

/** Bytes of view `i` of a binaryview/utf8view column: inlined, or a slice of a variadic buffer (hex). */
function viewHex(col: JColumn, i: number, utf8: boolean): string {
  const v = need(col.VIEWS, 'VIEWS', col)[i];
  if (v.INLINED !== undefined) return utf8 ? Buffer.from(v.INLINED, 'utf8').toString('hex') : v.INLINED;
  const buf = need(col.VARIADIC_DATA_BUFFERS, 'VARIADIC_DATA_BUFFERS', col)[need(v.BUFFER_INDEX, 'BUFFER_INDEX', col)];
  const at = need(v.OFFSET, 'OFFSET', col);
  const hex = buf.slice(2 * at, 2 * (at + v.SIZE));
  if (hex.length !== 2 * v.SIZE) throw new Error(`gold column ${col.name}: view ${i} lies outside its buffer`);
  return hex;
}

/**
 * The check of one gold column against our values: nulls from VALIDITY first, then the value's
 * own comparison by type (dictionary-encoded columns go through their dictionary).
 */
export function expecter(field: JField, col: JColumn, dicts: Map<number, JColumn>): Expect {
  const inner = valueExpecter(field, col, dicts);
  const validity = col.VALIDITY;
  return (ours, i, p) => {
    if (i >= col.count) throw new Error(`${p}: index ${i} lies beyond the gold column's ${col.count} values`);
    if (validity && validity[i] === 0) {
      if (ours !== null) differ(p, 'null', ours);
      return;
    }
    inner(ours, i, p);
  };
}

function childExpecter(field: JField, col: JColumn, k: number, dicts: Map<number, JColumn>): Expect {
  const f = field.children?.[k];
  const c = col.children?.[k];
  if (!f || !c) throw new Error(`gold column ${col.name} has no child ${k}`);
  return expecter(f, c, dicts);
}

function valueExpecter(field: JField, col: JColumn, dicts: Map<number, JColumn>): Expect {
  if (field.dictionary) {
    const dictCol = dicts.get(field.dictionary.id);
    if (!dictCol) throw new Error(`gold file has no dictionary ${field.dictionary.id} for ${field.name}`);
    const values = expecter({ ...field, dictionary: undefined }, dictCol, dicts);
    const data = need(col.DATA, 'DATA', col);
    return (ours, i, p) => {
      const index = Number(data[i]);
      if (!(index >= 0 && index < dictCol.count)) throw new Error(`${p}: gold index ${index} lies outside dictionary ${field.dictionary!.id}`);
      values(ours, index, p);
    };
  }
  const t = field.type;
  const data = () => need(col.DATA, 'DATA', col);
  switch (t.name) {
    case 'null':
      return (ours, _i, p) => {
        if (ours !== null) differ(p, 'null', ours);
      };
    case 'bool': {
      const d = data();
      return (ours, i, p) => {
        if (ours !== d[i]) differ(p, d[i], ours);
      };
    }
    case 'int': {
      const d = data();
      return (ours, i, p) => expectInteger(d[i], ours, p);
    }
    case 'floatingpoint': {
      const d = data();
      // The gold files print float32/float16 values rounded to a few digits: those compare at a relative 1e-3.
      const tol = t.precision === 'DOUBLE' ? 1e-9 : 1e-3;
      return (ours, i, p) => {
        const b = Number(d[i]);
        if (typeof ours === 'string' && !Number.isFinite(b) && ours === String(b)) return; // NaN and infinities as text (toJson.ts)
        if (typeof ours !== 'number' || !(Math.abs(ours - b) <= tol * Math.max(1, Math.abs(b)))) differ(p, d[i], ours);
      };
    }
    case 'decimal': {
      // DATA holds the unscaled integer as a decimal string; the scale places the point.
      const d = data();
      const scale = t.scale ?? 0;
      return (ours, i, p) => {
        const g = big(d[i]);
        if (typeof ours !== 'string') differ(p, `the decimal string of ${g} scaled by ${scale}`, ours);
        const m = /^(-?)(\d+)(?:\.(\d+))?$/.exec(ours);
        const frac = m?.[3] ?? '';
        let unscaled = m ? BigInt(m[2] + frac) * (m[1] ? -1n : 1n) : null;
        if (unscaled !== null && scale < 0) unscaled = unscaled % 10n ** BigInt(-scale) === 0n ? unscaled / 10n ** BigInt(-scale) : null;
        if (!m || unscaled !== g || frac.length !== Math.max(scale, 0)) differ(p, `${g} with ${scale} digits after the point`, ours);
      };
    }
    case 'date': {
      const d = data();
      if (t.unit === 'DAY') {
        return (ours, i, p) => {
          // Beyond what a Date holds (±10^8 days), our sources keep the count of days.
          if (typeof ours === 'string' && ours === `${big(d[i])} (days since epoch)`) return;
          const parsed = typeof ours === 'string' ? isoToCount(ours, 'SECOND') : null;
          if (!parsed || !parsed.dateOnly || parsed.count !== big(d[i]) * 86_400n) differ(p, `the date ${d[i]} days after 1970-01-01`, ours);
        };
      }
      // date[ms]: a date alone when the value is a whole day, else the full UTC instant.
      return (ours, i, p) => {
        const g = big(d[i]);
        const parsed = typeof ours === 'string' ? isoToCount(ours, 'MILLISECOND') : null;
        const whole = g % 86_400_000n === 0n;
        if (!parsed || parsed.count !== g || parsed.dateOnly !== whole || (!whole && (!parsed.zulu || parsed.fracDigits !== 3))) {
          differ(p, `the date-time ${g} ms after 1970-01-01${whole ? ' (a whole day: the date alone)' : ''}`, ours);
        }
      };
    }
    case 'time': {
      const d = data();
      const unit = need(t.unit, 'unit', col);
      const digits = UNIT_DIGITS[unit];
      return (ours, i, p) => {
        const g = big(d[i]);
        const m = typeof ours === 'string' ? /^(\d{2,}):(\d{2}):(\d{2})(?:\.(\d+))?$/.exec(ours) : null;
        const frac = m?.[4] ?? '';
        const count = m ? (BigInt(m[1]) * 3600n + BigInt(m[2]) * 60n + BigInt(m[3])) * 10n ** BigInt(digits) + (frac ? BigInt(frac) : 0n) : null;
        if (!m || count !== g || frac.length !== digits) differ(p, `the time of day ${g} ${UNIT_ABBR[unit]} after midnight`, ours);
      };
    }
    case 'timestamp': {
      const d = data();
      const unit = need(t.unit, 'unit', col);
      const zoned = t.timezone !== undefined && t.timezone !== '';
      return (ours, i, p) => expectInstant(d[i], ours, p, unit, zoned);
    }
    case 'duration': {
      const d = data();
      return (ours, i, p) => expectInteger(d[i], ours, p);
    }
    case 'interval': {
      const d = data();
      if (t.unit === 'YEAR_MONTH') {
        return (ours, i, p) => {
          if (!isObject(ours) || Object.keys(ours).join() !== 'months' || ours.months !== Number(d[i])) differ(p, { months: d[i] }, ours);
        };
      }
      if (t.unit === 'DAY_TIME') {
        return (ours, i, p) => {
          const g = d[i] as { days: number; milliseconds: number };
          if (!isObject(ours) || Object.keys(ours).join() !== 'days,milliseconds' || ours.days !== g.days || ours.milliseconds !== g.milliseconds) differ(p, g, ours);
        };
      }
      if (t.unit === 'MONTH_DAY_NANO') {
        // Ours keeps the 64-bit nanoseconds exact as a string.
        return (ours, i, p) => {
          const g = d[i] as { months: number; days: number; nanoseconds: number | string };
          const want = { months: Number(g.months), days: Number(g.days), nanoseconds: big(g.nanoseconds).toString() };
          if (!isObject(ours) || JSON.stringify(ours) !== JSON.stringify(want)) differ(p, want, ours);
        };
      }
      break;
    }
    case 'utf8':
    case 'largeutf8': {
      const d = data();
      return (ours, i, p) => {
        if (ours !== d[i]) differ(p, JSON.stringify(d[i]), ours);
      };
    }
    case 'binary':
    case 'largebinary':
    case 'fixedsizebinary': {
      const d = data();
      if (t.name === 'fixedsizebinary') {
        return (ours, i, p) => {
          if (String(d[i]).length !== 2 * (t.byteWidth ?? -1)) throw new Error(`${p}: gold value is not ${t.byteWidth} bytes wide`);
          expectBinary(String(d[i]), ours, p);
        };
      }
      return (ours, i, p) => expectBinary(String(d[i]), ours, p);
    }
    case 'binaryview':
      return (ours, i, p) => expectBinary(viewHex(col, i, false), ours, p);
    case 'utf8view':
      return (ours, i, p) => {
        const want = Buffer.from(viewHex(col, i, true), 'hex').toString('utf8');
        if (ours !== want) differ(p, JSON.stringify(want), ours);
      };
    case 'list':
    case 'largelist':
    case 'listview':
    case 'largelistview': {
      const offsets = need(col.OFFSET, 'OFFSET', col);
      // listview (from memory of the format, seen in the files): OFFSET and SIZE per value, not OFFSET pairs.
      const sizes = t.name.endsWith('view') ? need(col.SIZE, 'SIZE', col) : null;
      const item = childExpecter(field, col, 0, dicts);
      return (ours, i, p) => {
        const a = Number(offsets[i]);
        const b = sizes ? a + Number(sizes[i]) : Number(offsets[i + 1]);
        if (!Array.isArray(ours) || ours.length !== b - a) differ(p, `a list of ${b - a} items`, ours);
        ours.forEach((x, k) => item(x, a + k, `${p}/${k}`));
      };
    }
    case 'fixedsizelist': {
      const n = need(t.listSize, 'listSize', col);
      const item = childExpecter(field, col, 0, dicts);
      return (ours, i, p) => {
        if (!Array.isArray(ours) || ours.length !== n) differ(p, `a list of ${n} items`, ours);
        ours.forEach((x, k) => item(x, i * n + k, `${p}/${k}`));
      };
    }
    case 'struct': {
      const names = (field.children ?? []).map((f) => f.name);
      const members = names.map((_, k) => childExpecter(field, col, k, dicts));
      return (ours, i, p) => {
        if (new Set(names).size !== names.length) throw new Error(`${p}: struct members share a name (${names.map((n) => JSON.stringify(n)).join(', ')}); a JSON object cannot hold them all`);
        if (!isObject(ours) || [...Object.keys(ours)].sort().join('\u0000') !== [...names].sort().join('\u0000')) differ(p, `an object with members ${JSON.stringify(names)}`, ours);
        names.forEach((n, k) => members[k](ours[n], i, `${p}/${n}`));
      };
    }
    case 'map': {
      // A map is a list of a struct of two members, key then value, whatever their names.
      const offsets = need(col.OFFSET, 'OFFSET', col);
      const entriesField = field.children?.[0];
      const entries = col.children?.[0];
      if (!entriesField || !entries) throw new Error(`gold map column ${col.name} has no entries`);
      const key = childExpecter(entriesField, entries, 0, dicts);
      const value = childExpecter(entriesField, entries, 1, dicts);
      const keyField = entriesField.children?.[0];
      if (keyField?.dictionary) throw new Error(`no comparison for dictionary-encoded map keys (field ${field.name})`);
      const textKeys = ['utf8', 'largeutf8'].includes(keyField?.type.name ?? '');
      const keyData = entries.children?.[0]?.DATA;
      return (ours, i, p) => {
        const a = Number(offsets[i]);
        const b = Number(offsets[i + 1]);
        const goldKeys = keyData ? keyData.slice(a, b) : [];
        // Ours: an object when every key is a distinct string, else [{key, value}] in order (toJson.ts).
        const asObject = textKeys && new Set(goldKeys).size === goldKeys.length;
        if (asObject) {
          if (!isObject(ours) || Object.keys(ours).length !== b - a) differ(p, `an object of ${b - a} entries`, ours);
          for (let k = a; k < b; k++) {
            const name = String(keyData![k]);
            key(name, k, `${p}/${k - a}/key`);
            if (!Object.prototype.hasOwnProperty.call(ours, name)) differ(p, `an entry ${JSON.stringify(name)}`, ours);
            value(ours[name], k, `${p}/${name}`);
          }
          return;
        }
        if (!Array.isArray(ours) || ours.length !== b - a) differ(p, `a list of ${b - a} entries`, ours);
        ours.forEach((e, k) => {
          if (!isObject(e) || Object.keys(e).join() !== 'key,value') differ(`${p}/${k}`, 'an entry {key, value}', e);
          key(e.key, a + k, `${p}/${k}/key`);
          value(e.value, a + k, `${p}/${k}/value`);
        });
      };
    }
    case 'union': {
      // TYPE_ID holds the type id of each value; typeIds maps it to a member; dense unions index the
      // member through OFFSET, sparse ones at the same position (from memory of the format, seen in the files).
      const ids = need(t.typeIds, 'typeIds', col);
      const typeOf = need(col.TYPE_ID, 'TYPE_ID', col);
      const dense = t.mode === 'DENSE';
      const offsets = dense ? need(col.OFFSET, 'OFFSET', col) : null;
      const members = ids.map((_, k) => childExpecter(field, col, k, dicts));
      return (ours, i, p) => {
        const k = ids.indexOf(typeOf[i]);
        if (k < 0) throw new Error(`${p}: gold type id ${typeOf[i]} is not among ${ids}`);
        members[k](ours, offsets ? Number(offsets[i]) : i, p);
      };
    }
    case 'runendencoded': {
      // Children run_ends (cumulative ends, ascending) and values (from memory of the format, seen in the files).
      const ends = need(col.children?.[0]?.DATA, 'run_ends', col).map(Number);
      const values = childExpecter(field, col, 1, dicts);
      return (ours, i, p) => {
        const run = ends.findIndex((e) => e > i);
        if (run < 0) throw new Error(`${p}: index ${i} lies beyond the last run`);
        values(ours, run, p);
      };
    }
  }
  throw new Error(`no comparison for Arrow type ${JSON.stringify(t)} (field ${field.name})`);
}

/** Dictionaries of a gold file by id. */
export function goldDictionaries(doc: JDoc): Map<number, JColumn> {
  return new Map((doc.dictionaries ?? []).map((d) => [d.id, d.data.columns[0]]));
}
