// Atomics.waitAsync for the open loop's main thread (open-loop-collect.ts, event-ring.ts).

/** Atomics.waitAsync (ES2024; the project's TypeScript lib predates it, Node has it). */
type WaitAsync = (array: Int32Array, index: number, value: number, timeoutMs: number) =>
  { async: false; value: string } | { async: true; value: Promise<string> };
export const waitAsync = (Atomics as unknown as { waitAsync: WaitAsync }).waitAsync;
