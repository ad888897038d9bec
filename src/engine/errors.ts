// The errors the product throws on purpose, recognised by their class — never by a name string or by
// matching a library's message. Across a worker boundary an error travels as its `ErrorKind` and is
// made again as the same class on the other side (`errorFromWire`).

/** What kind of failure an error is, as it crosses a thread boundary. */
export type ErrorKind = 'cancelled' | 'setup' | 'decoder-trap' | 'unsupported' | 'read-failure' | 'other';

/** The work was stopped on purpose (the user cancelled, a newer request replaced it). */
export class CancelledError extends Error {
  readonly kind = 'cancelled';
  constructor(message = 'cancelled') {
    super(message);
    // The name the DOM standard gives an aborted operation (an AbortSignal's reason carries it too).
    this.name = 'AbortError';
  }
}

/** The configuration cannot work (a schema that does not compile, a tokenizer that does not load): said once, not a finding per record. */
export class SetupError extends Error {
  readonly kind = 'setup';
  constructor(message: string) {
    super(message);
    this.name = 'SetupError';
  }
}

/** A WebAssembly decoder trapped (an out-of-bounds access or `unreachable` on malformed bytes). */
export class DecoderTrap extends Error {
  readonly kind = 'decoder-trap';
  constructor(message: string) {
    super(message);
    this.name = 'DecoderTrap';
  }
}

/**
 * The data uses something this reader cannot read (a codec, an encoding, a type, encryption),
 * found by our own reading of the file's metadata before a decoding library sees the bytes: a
 * `read-unsupported` finding. `feature` names what it is, `column` the column that carries it.
 */
export class UnsupportedFeature extends Error {
  readonly kind = 'unsupported';
  constructor(
    message: string,
    readonly feature = '',
    readonly column?: string,
  ) {
    super(message);
    this.name = 'UnsupportedFeature';
  }
}

/**
 * A decoding library refused bytes our own checks let through, so the data is damaged: a
 * `read-corrupt` finding (or the format's own rule for a footer or header). The message is the
 * library's own, in one line, for the finding to quote; `cause` keeps what was thrown.
 */
export class ReadFailure extends Error {
  readonly kind = 'read-failure';
  constructor(message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = 'ReadFailure';
  }
}

/**
 * True for a cancellation: ours, or the standard `AbortError` DOMException an `AbortSignal`'s
 * `throwIfAborted()` throws when no reason was given.
 */
export function isCancelled(err: unknown): boolean {
  if (err instanceof CancelledError) return true;
  return typeof DOMException !== 'undefined' && err instanceof DOMException && err.name === 'AbortError';
}

/** Errors that stop an analysis rather than becoming a finding about the file. */
export function isFatal(err: unknown): boolean {
  return isCancelled(err) || err instanceof SetupError;
}

export function errorKind(err: unknown): ErrorKind {
  if (isCancelled(err)) return 'cancelled';
  if (err instanceof SetupError) return 'setup';
  if (err instanceof DecoderTrap) return 'decoder-trap';
  if (err instanceof UnsupportedFeature) return 'unsupported';
  if (err instanceof ReadFailure) return 'read-failure';
  return 'other';
}

/** The error a worker reported, as the class of its kind. */
export function errorFromWire(kind: ErrorKind, message: string): Error {
  switch (kind) {
    case 'cancelled':
      return new CancelledError(message);
    case 'setup':
      return new SetupError(message);
    case 'decoder-trap':
      return new DecoderTrap(message);
    case 'unsupported':
      return new UnsupportedFeature(message);
    case 'read-failure':
      return new ReadFailure(message);
    default:
      return new Error(message);
  }
}
