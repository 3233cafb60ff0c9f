/** Runs `fn` and returns the error it throws, which must be an instance of `type`. */
export function thrownBy<E extends Error>(type: new (...args: never[]) => E, fn: () => unknown): E {
  try {
    fn();
  } catch (e) {
    if (e instanceof type) return e;
    throw e;
  }
  throw new Error(`expected a ${type.name}`);
}
