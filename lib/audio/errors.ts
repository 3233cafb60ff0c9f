/**
 * The one error type of WAV/BWF reading: a message a transfer engineer can act
 * on, naming what is wrong and where (the byte offset in the file, when there is one).
 */
export class WavError extends Error {
  /** Byte offset in the file where the problem was found, when it has one. */
  readonly offset?: number;

  constructor(message: string, offset?: number) {
    super(message);
    this.name = "WavError";
    if (offset !== undefined) this.offset = offset;
  }

  toJSON(): { message: string; offset?: number } {
    return this.offset === undefined
      ? { message: this.message }
      : { message: this.message, offset: this.offset };
  }
}
