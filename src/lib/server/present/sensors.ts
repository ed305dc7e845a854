import { sensorState } from "@/domain/sensorState";
import type { SensorWithArea } from "../db/queries/sensors";

const iso = (ms: number | null) => (ms === null ? null : new Date(ms).toISOString());

/**
 * A sensor as the public API shows it. `status`: "new" (seen, not yet named and placed),
 * "retired", or for a sensor in service "reporting" / "silent" from its last reading.
 */
export function presentSensor(s: SensorWithArea, nowMs = Date.now()) {
  const live = sensorState(s.lastSeenAt, nowMs);
  const status =
    s.status === "new"
      ? "new"
      : s.status === "retired"
        ? "retired"
        : live === "reporting"
          ? "reporting"
          : "silent";
  return {
    id: s.id,
    label: s.label,
    kind: s.kind,
    area: s.areaName,
    last_seen_at: iso(s.lastSeenAt),
    last_temp_c: s.lastTempC,
    last_rh: s.lastRhPct,
    battery_pct: s.batteryPct,
    temp_offset_c: s.tempOffsetC,
    rh_offset_pct: s.rhOffsetPct,
    status,
  };
}
