// The typed errors: a cancellation, a setup problem, a decoder trap, a feature a reader cannot read
// and a read failure are told apart by class, and keep their class across a worker boundary.
import { describe, expect, it } from 'vitest';
import { CancelledError, DecoderTrap, ReadFailure, SetupError, UnsupportedFeature, errorFromWire, errorKind, isCancelled, isFatal } from '../../../src/engine/errors.js';
import { guardWasm } from '../../../src/engine/sources/columnar/wasmGuard.js';
import { INCONSISTENT_DATA } from '../../../src/engine/sources/columnarRules.js';
import { prepareChecks } from '../../../src/engine/analyze.js';
import type { Check } from '../../../src/engine/checks/check.js';
import { withDefaults } from '../../../src/engine/config.js';

describe('typed errors', () => {
  it('recognises a cancellation by class, and the standard AbortSignal reason', () => {
    expect(isCancelled(new CancelledError())).toBe(true);
    const ac = new AbortController();
    ac.abort();
    let thrown: unknown;
    try {
      ac.signal.throwIfAborted();
    } catch (e) {
      thrown = e;
    }
    // WHATWG DOM standard: abort() without a reason makes an "AbortError" DOMException.
    expect(thrown).toBeInstanceOf(DOMException);
    expect(isCancelled(thrown)).toBe(true);
  });

  it('does not take an ordinary error that merely carries the name for a cancellation', () => {
    const e = new Error('cancelled');
    e.name = 'AbortError';
    expect(isCancelled(e)).toBe(false);
    expect(isFatal(e)).toBe(false);
    expect(errorKind(e)).toBe('other');
  });

  it('keeps the class across the wire for every kind', () => {
    for (const e of [new CancelledError('x'), new SetupError('y'), new DecoderTrap('z'), new UnsupportedFeature('u'), new ReadFailure('r'), new Error('w')]) {
      const back = errorFromWire(errorKind(e), e.message);
      expect(back.constructor).toBe(e.constructor);
      expect(back.message).toBe(e.message);
    }
    expect(isFatal(errorFromWire('setup', 'bad schema'))).toBe(true);
    expect(isFatal(errorFromWire('decoder-trap', 'trap'))).toBe(false);
    expect(isFatal(new UnsupportedFeature('LZO'))).toBe(false);
    expect(isFatal(new ReadFailure('bad page'))).toBe(false);
  });

  it('a guarded decoder call that rejects comes back as a ReadFailure whatever its words, keeping what was thrown', async () => {
    for (const words of ['not supported', 'unsupported codec', 'encrypted', 'not yet implemented']) {
      const thrown = new Error(words);
      const err = await guardWasm(() => Promise.reject(thrown)).catch((e: unknown) => e);
      expect(err).toBeInstanceOf(ReadFailure);
      expect(err).not.toBeInstanceOf(UnsupportedFeature);
      expect((err as ReadFailure).message).toBe(words);
      expect((err as ReadFailure).cause).toBe(thrown);
      expect(errorKind(err)).toBe('read-failure');
    }
    // An engine slip inside the library is quoted in plain words, not as its internal text.
    const slip = await guardWasm(() => Promise.reject(new TypeError("Cannot read properties of undefined (reading 'length')"))).catch((e: unknown) => e);
    expect([slip instanceof ReadFailure, (slip as Error).message]).toEqual([true, INCONSISTENT_DATA]);
    // Told by class, not by words: a library's own Error that happens to read like an engine slip keeps its words,
    // and a slip wrapped as another error's cause is still a slip.
    const worded = await guardWasm(() => Promise.reject(new Error('offset is out of bounds of page 3'))).catch((e: unknown) => e);
    expect((worded as Error).message).toBe('offset is out of bounds of page 3');
    const wrapped = await guardWasm(() => Promise.reject(new Error('decode failed', { cause: new RangeError('Invalid typed array length: 9') }))).catch((e: unknown) => e);
    expect((wrapped as Error).message).toBe(INCONSISTENT_DATA);
    // Ours pass through with their class.
    const trap = new DecoderTrap('stopped');
    expect(await guardWasm(() => Promise.reject(trap)).catch((e: unknown) => e)).toBe(trap);
    expect(await guardWasm(() => Promise.resolve(7))).toBe(7);
  });

  it('turns a check that cannot prepare into a SetupError with its message', async () => {
    const broken: Check = {
      name: 'broken',
      rules: [],
      prepare() {
        throw new TypeError('the schema does not compile');
      },
      checkRecord() {},
    };
    const err = await prepareChecks([broken], withDefaults()).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(SetupError);
    expect((err as Error).message).toBe('the schema does not compile');
  });
});
