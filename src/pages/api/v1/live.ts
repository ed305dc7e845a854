import type { APIRoute } from "astro";
import { bus, type AlertEvent, type ReadingEvent, type SensorEvent } from "@/lib/server/live/bus";
import { endpoint, requireAction } from "@/lib/server/http/guard";

const HEARTBEAT_MS = 15_000;

/**
 * Server-sent events for the live floor: `readings` (an array of readings just committed:
 * sensor, ts, temp_c, rh, latest, committed_at) and `sensor` (a sensor registered, changed
 * or retired) and `alert` (an episode opened, worsened, acknowledged or cleared: id, change,
 * state, rule_id, sensor, pour_id, severity). The browser's EventSource reconnects by itself; `retry` asks it to wait 2 s.
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
      const onAlert = (e: AlertEvent) =>
        write(
          `event: alert\ndata: ${JSON.stringify({
            id: e.episodeId,
            change: e.change,
            state: e.state,
            rule_id: e.ruleId,
            sensor: e.sensorId,
            pour_id: e.pourId,
            severity: e.severity,
          })}\n\n`,
        );
      bus().on("readings", onReadings);
      bus().on("sensor", onSensor);
      bus().on("alert", onAlert);
      const heartbeat = setInterval(() => write(": keep-alive\n\n"), HEARTBEAT_MS);
      cleanup = () => {
        clearInterval(heartbeat);
        bus().off("readings", onReadings);
        bus().off("sensor", onSensor);
        bus().off("alert", onAlert);
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
