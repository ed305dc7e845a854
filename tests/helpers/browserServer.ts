import { afterAll, beforeAll } from "vitest";
import { chromiumAvailable } from "./browser";
import { startPlinth, type RunningPlinth } from "./server";

/**
 * The server for one file of browser tests: started in demo mode (temporary database, free
 * loopback ports) before the file's tests when Chromium is present, and stopped after them.
 * Read its url and dbPath inside tests, or in hooks declared after this call.
 */
export function plinthForBrowser(): Pick<RunningPlinth, "url" | "dbPath"> {
  let running: RunningPlinth | undefined;
  beforeAll(async () => {
    if (chromiumAvailable()) running = await startPlinth();
  });
  afterAll(async () => {
    await running?.stop();
  });
  const started = (): RunningPlinth => {
    if (!running) throw new Error("Plinth has not started: read it inside a test or a later hook");
    return running;
  };
  return {
    get url() {
      return started().url;
    },
    get dbPath() {
      return started().dbPath;
    },
  };
}
