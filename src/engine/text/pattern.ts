// ECMA-262 regular expressions (what a JSON Schema `pattern` is) run without catastrophic
// backtracking: translated to RE2 syntax and matched in linear time by re2js; the few patterns RE2
// cannot express (lookaround, backreferences) run on the built-in engine inside a VM context whose
// timeout interrupts them. Every match first checks a deadline, so a caller can bound the time
// one record may take and report running out instead of stalling.

import { createContext, Script } from 'node:vm';
import { RE2JS } from 're2js';

/** Thrown by a match once the deadline set with `withDeadline` has passed. */
export class PatternBudgetError extends Error {
  constructor(readonly pattern: string) {
    super(`pattern ${JSON.stringify(pattern.length > 60 ? `${pattern.slice(0, 60)}…` : pattern)} ran out of the time budget`);
    this.name = 'PatternBudgetError';
  }
}

let deadline = Number.POSITIVE_INFINITY;

/** Runs `fn` with every pattern match bounded by `budgetMs` from now (nested calls keep the earlier deadline). */
export function withDeadline<T>(budgetMs: number, fn: () => T): T {
  const outer = deadline;
  deadline = Math.min(outer, Date.now() + budgetMs);
  try {
    return fn();
  } finally {
    deadline = outer;
  }
}

export interface PatternMatcher {
  test(s: string): boolean;
  /** Which engine runs it: 'linear' (re2js) or 'interruptible' (the built-in engine under a VM timeout). */
  readonly engine: 'linear' | 'interruptible';
  toString(): string;
}

// ECMA-262 WhiteSpace and LineTerminator code points (§22.2.2.9 CharacterClassEscape :: s).
const WS = '\\t\\n\\x{0B}\\f\\r \\x{A0}\\x{1680}\\x{2000}-\\x{200A}\\x{2028}\\x{2029}\\x{202F}\\x{205F}\\x{3000}\\x{FEFF}';
// What `.` excludes without the `s` flag: the line terminators (§22.2.2.7).
const DOT = '[^\\n\\r\\x{2028}\\x{2029}]';

/**
 * The pattern in RE2 syntax with ECMA-262 meanings kept for `\s`, `\S`, `.`, `\uXXXX`, `\u{…}`;
 * null where RE2 has no equivalent (then the built-in engine runs it).
 */
export function toRe2Syntax(pattern: string): string | null {
  let out = '';
  let inClass = false;
  for (let i = 0; i < pattern.length; i++) {
    const c = pattern[i];
    if (c === '\\') {
      const n = pattern[i + 1];
      if (n === undefined) return null;
      if (n === 's') {
        out += inClass ? WS : `[${WS}]`;
        i++;
        continue;
      }
      if (n === 'S') {
        if (inClass) return null;
        out += `[^${WS}]`;
        i++;
        continue;
      }
      if (n === 'u') {
        const braced = /^\{([0-9a-fA-F]{1,6})\}/.exec(pattern.slice(i + 2));
        if (braced) {
          out += `\\x{${braced[1]}}`;
          i += 1 + braced[0].length;
          continue;
        }
        const four = /^[0-9a-fA-F]{4}/.exec(pattern.slice(i + 2));
        if (!four) return null;
        let cp = parseInt(four[0], 16);
        let used = 5;
        // A surrogate pair written as two escapes is one code point under the `u` flag.
        const low = /^\\u([dD][c-fC-F][0-9a-fA-F]{2})/.exec(pattern.slice(i + 6));
        if (cp >= 0xd800 && cp <= 0xdbff && low) {
          cp = 0x10000 + ((cp - 0xd800) << 10) + (parseInt(low[1], 16) - 0xdc00);
          used += 6;
        }
        out += `\\x{${cp.toString(16)}}`;
        i += used;
        continue;
      }
      // Backreferences and \k<name> have no linear-time form; \c, \0 and \v differ in RE2.
      if (/[1-9kcv0]/.test(n)) return null;
      out += c + n;
      i++;
      continue;
    }
    if (inClass) {
      if (c === ']') inClass = false;
      out += c;
      continue;
    }
    if (c === '[') {
      inClass = true;
      out += c;
      // A leading ']' or '^]' is literal in RE2 but ends an empty class in ECMA-262: leave those to the built-in engine.
      if (pattern[i + 1] === ']' || (pattern[i + 1] === '^' && pattern[i + 2] === ']')) return null;
      if (pattern[i + 1] === '^') {
        out += '^';
        i++;
      }
      continue;
    }
    if (c === '.') {
      out += DOT;
      continue;
    }
    // Lookaround: no linear-time form.
    if (c === '(' && pattern[i + 1] === '?' && (pattern[i + 2] === '=' || pattern[i + 2] === '!' || (pattern[i + 2] === '<' && (pattern[i + 3] === '=' || pattern[i + 3] === '!')))) return null;
    out += c;
  }
  return inClass ? null : out;
}

const vmContext = createContext({});
const vmTest = new Script('rx.test(s)');

/** Compiles an ECMA-262 pattern (throws SyntaxError when it is not one). */
export function compilePattern(pattern: string, flags = 'u'): PatternMatcher {
  // The built-in engine decides what is a valid pattern, as JSON Schema asks (ECMA-262 dialect).
  const native = new RegExp(pattern, flags);
  const re2 = toRe2Syntax(pattern);
  if (re2 !== null && !/[gimsy]/.test(flags)) {
    try {
      const linear = RE2JS.compile(re2);
      return {
        engine: 'linear',
        toString: () => `/${pattern}/${flags}`,
        test(s: string): boolean {
          if (Date.now() > deadline) throw new PatternBudgetError(pattern);
          return linear.test(s);
        },
      };
    } catch {
      // Syntax RE2 does not share: the built-in engine, interruptible, below.
    }
  }
  return {
    engine: 'interruptible',
    // ajv keys its compiled patterns by this text.
    toString: () => `/${pattern}/${flags}`,
    test(s: string): boolean {
      const left = deadline - Date.now();
      if (left <= 0) throw new PatternBudgetError(pattern);
      vmContext.rx = native;
      vmContext.s = s;
      try {
        return vmTest.runInContext(vmContext, { timeout: Math.max(1, Math.min(left, 2 ** 31 - 1)) }) as boolean;
      } catch (e) {
        if ((e as NodeJS.ErrnoException)?.code === 'ERR_SCRIPT_EXECUTION_TIMEOUT') throw new PatternBudgetError(pattern);
        throw e;
      } finally {
        vmContext.s = '';
      }
    },
  };
}
