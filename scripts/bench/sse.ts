/** A small reader of server-sent events (text/event-stream), enough for the live feed. */
import http from "node:http";

export interface SseEvent {
  event: string;
  data: string;
}

/**
 * Takes every complete event (ended by a blank line) out of `buffer`, calls `onEvent` for
 * each one with data, and returns what is left for the next chunk. Comment lines (":") and
 * fields other than event and data are skipped.
 */
export function drainEvents(buffer: string, onEvent: (e: SseEvent) => void): string {
  let rest = buffer.replace(/\r\n?/g, "\n");
  let end = rest.indexOf("\n\n");
  while (end !== -1) {
    const block = rest.slice(0, end);
    rest = rest.slice(end + 2);
    let event = "message";
    const data: string[] = [];
    for (const line of block.split("\n")) {
      if (line.startsWith("event:")) event = line.slice(6).trim();
      else if (line.startsWith("data:")) data.push(line.slice(5).replace(/^ /, ""));
    }
    if (data.length > 0) onEvent({ event, data: data.join("\n") });
    end = rest.indexOf("\n\n");
  }
  return rest;
}

/** How long a connection to the live feed may take to say hello. */
const CONNECT_WAIT_MS = 10_000;

/**
 * Connects to Plinth's live feed (GET /api/v1/live) with the session `cookie` and resolves,
 * with a way to close it, once its `hello` event has arrived. Every event after it goes to
 * `onEvent` with the time (epoch ms) its chunk was received.
 */
export function connectLive(
  url: string,
  cookie: string,
  onEvent: (e: SseEvent, receivedAtMs: number) => void,
): Promise<{ close: () => void }> {
  return new Promise((resolve, reject) => {
    let buffer = "";
    const onData = (chunk: string) => {
      const receivedAtMs = Date.now();
      buffer = drainEvents(buffer + chunk, (e) => {
        if (e.event === "hello") {
          clearTimeout(timer);
          resolve({ close: () => req.destroy() });
        } else onEvent(e, receivedAtMs);
      });
    };
    const headers = { cookie, accept: "text/event-stream" };
    const req = http.get(`${url}/api/v1/live`, { headers }, (res) => {
      if (res.statusCode !== 200)
        return fail(new Error(`GET /api/v1/live answered ${res.statusCode}`));
      res.setEncoding("utf8");
      res.on("data", onData);
    });
    const fail = (err: Error) => {
      clearTimeout(timer);
      req.destroy();
      reject(err);
    };
    const timer = setTimeout(
      () => fail(new Error(`no hello event from /api/v1/live in ${CONNECT_WAIT_MS / 1000} s`)),
      CONNECT_WAIT_MS,
    );
    req.on("error", fail);
  });
}
