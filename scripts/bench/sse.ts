/** A small reader of server-sent events (text/event-stream), enough for the live feed. */

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
