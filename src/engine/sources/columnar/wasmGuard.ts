// parquet-wasm's async reader polls its futures from promise callbacks, so a Rust panic on a
// malformed page surfaces as an uncaught WebAssembly.RuntimeError and the read never settles.
// While a guarded call is pending we catch that error and reject the call, so a bad shard becomes
// a finding instead of a crash or a hang. Whatever else the call rejects with is the decoder
// refusing the bytes: it comes back as a ReadFailure quoting the decoder's message, so callers tell
// damage from a trap by class, never by reading the text.

import { DecoderTrap, ReadFailure } from '../../errors.js';
import { errorText } from '../columnarRules.js';

/** The engine room has no DOM library, where WebAssembly's types live; Node provides the class. */
declare const WebAssembly: { RuntimeError: new (message?: string) => Error };

const pending = new Set<(e: Error) => void>();
let faults = 0;

function onUncaught(e: unknown): void {
  if (e instanceof WebAssembly.RuntimeError) {
    faults += 1;
    const all = [...pending];
    pending.clear();
    uninstall();
    for (const reject of all) reject(new DecoderTrap('the Parquet decoder stopped on malformed data'));
    return;
  }
  // Not ours: restore the default (print and exit) by rethrowing without this listener.
  uninstall();
  if (process.listenerCount('uncaughtException') === 0) {
    process.nextTick(() => {
      throw e;
    });
  }
}

let installed = false;
function install(): void {
  if (!installed && typeof process !== 'undefined' && process.on) {
    process.on('uncaughtException', onUncaught);
    installed = true;
  }
}
function uninstall(): void {
  if (installed) {
    process.removeListener('uncaughtException', onUncaught);
    installed = false;
  }
}

export function guardWasm<T>(call: () => Promise<T>): Promise<T> {
  return new Promise<T>((resolve, reject) => {
    let settled = false;
    const fail = (e: Error) => {
      if (settled) return;
      settled = true;
      reject(e);
    };
    pending.add(fail);
    install();
    const done = () => {
      pending.delete(fail);
      if (pending.size === 0) uninstall();
    };
    call().then(
      (v) => {
        done();
        if (!settled) {
          settled = true;
          resolve(v);
        }
      },
      (e) => {
        done();
        fail(e instanceof DecoderTrap || e instanceof ReadFailure ? e : new ReadFailure(errorText(e), { cause: e }));
      },
    );
  });
}

/** Decoder faults caught so far: a worker hosting the decoder may recycle itself after one. */
export function wasmFaults(): number {
  return faults;
}
