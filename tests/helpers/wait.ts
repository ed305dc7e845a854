/**
 * Polls `probe` until it gives something truthy, and resolves with it; fails naming `what`
 * after `timeoutMs`. For waiting on a real server, broker or fake to get somewhere.
 */
export async function waitFor<T>(
  what: string,
  probe: () => T | undefined | null | false | Promise<T | undefined | null | false>,
  timeoutMs = 30_000,
  everyMs = 100,
): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const v = await probe();
    if (v) return v;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}
