/**
 * The end of an exhaustive `switch`: the type checker proves it unreachable,
 * and a value that arrives anyway (from untyped data) throws, naming what it was.
 */
export function assertNever(x: never, what: string): never {
  const shown = typeof x === 'object' && x !== null ? JSON.stringify(x) : String(x);
  throw new Error(`Unknown ${what}: ${shown}`);
}
