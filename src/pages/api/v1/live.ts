import type { APIRoute } from "astro";
import { bus, type ReadingEvent, type SensorEvent } from "@/lib/server/live/bus";
import { endpoint, requireAction } from "@/lib/server/http/guard";

const HEARTBEAT_MS = 15_000;

/**
 * Server-sent events for the live floor: `readings` (an array of readings just committed:
 * sensor, ts, temp_c, rh, latest, committed_at) and `sensor` (a sensor registered, changed
 * or retired). The browser's EventSource reconnects by itself; `retry` asks it to wait 2 s.
 */
export const GET: APIRoute = endpoint(async ({ locals, request }) => {
  requireAction(locals, "plant.read");
  const encoder = new TextEncoder();
  let cleanup = () => {};
  const stream = new ReadableStream<Uint8Array>({
    start(controller) {
      const write = (text: string) => {
        try {
          controller.enqueue(encoder.encode(text));
        } catch {
          cleanup();
        }
      };
      const onReadings = (events: ReadingEvent[]) =>
        write(
          `event: readings\ndata: ${JSON.stringify(
            events.map((e) => ({
              sensor: e.sensorId,
              ts: e.tsMs,
              temp_c: e.tempC,
              rh: e.rhPct,
              latest: e.latest,
              committed_at: e.committedAtMs,
            })),
          )}\n\n`,
        );
      const onSensor = (e: SensorEvent) =>
        write(
          `event: sensor\ndata: ${JSON.stringify({ sensor: e.sensorId, change: e.change })}\n\n`,
        );
      bus().on("readings", onReadings);
      bus().on("sensor", onSensor);
      const heartbeat = setInterval(() => write(": keep-alive\n\n"), HEARTBEAT_MS);
      cleanup = () => {
        clearInterval(heartbeat);
        bus().off("readings", onReadings);
        bus().off("sensor", onSensor);
        cleanup = () => {};
      };
      request.signal.addEventListener("abort", () => {
        cleanup();
        try {
          controller.close();
        } catch {
          // already closed
        }
      });
      write(`retry: 2000\nevent: hello\ndata: ${JSON.stringify({ at: Date.now() })}\n\n`);
    },
    cancel() {
      cleanup();
    },
  });
  return new Response(stream, {
    headers: {
      "content-type": "text/event-stream; charset=utf-8",
      "cache-control": "no-cache, no-transform",
      "x-accel-buffering": "no",
    },
  });
});
