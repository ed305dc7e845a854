/**
 * Seeds the invented demo plant into an empty database: the demo accounts and gateway of
 * the contract, areas, sensors, mixes with invented lab breaks, pours, and days of
 * readings drawn from the demo physics. Runs only in demo mode and only once.
 */
import { eq, sql } from "drizzle-orm";
import { psiToMpa } from "@/domain/units";
import {
  demoAreas,
  demoMixes,
  demoPlant,
  demoPours,
  demoReading,
  demoSensors,
} from "../../../../simulator/plant";
import { hashKey, hashPassword } from "../auth";
import { getDb } from "../db/client";
import { writeAudit } from "../db/queries/audit";
import { insertReadings, type ReadingRow } from "../db/queries/readings";
import { setSetting } from "../db/queries/settings";
import {
  areas,
  calibrationPoints,
  gateways,
  mixCalibrations,
  mixes,
  pourProducts,
  pourSensors,
  pours,
  sensorCalibrations,
  sensors,
  users,
} from "../db/schema";
import { nextCalibrationDue } from "@/domain/calibration";
import {
  equivalentAgeAtConstantTempH,
  LAB_CURING_TEMP_C,
  ttfAtConstantTempCH,
} from "@/domain/calibrationPoints";
import { fitStrengthCurve } from "@/domain/strength/curves";
import { log } from "../log";
import { seedDemoAlerting } from "./alerts";
import { seedDemoReleases } from "./releases";

export const DEMO_PASSWORD = "demo-plinth-pass";
export const DEMO_GATEWAY = { name: "demo-gateway", key: "demo-gateway-key-0001" };

export const demoAccounts = [
  { email: "manager@example.com", name: "Dana Whitfield", role: "manager", phone: "+15550100001" },
  { email: "qc@example.com", name: "Ravi Okafor", role: "qc", phone: "+15550100002" },
  { email: "operator@example.com", name: "Sam Lindqvist", role: "operator", phone: "+15550100003" },
  { email: "viewer@example.com", name: "Jo Marchetti", role: "viewer", phone: null },
] as const;

const HOUR_MS = 3_600_000;
/** How far back the seeded history reaches, and its spacing. */
const HISTORY_H = 6 * 24;
const HISTORY_STEP_MS = 5 * 60_000;

/** True when the database already holds people: then the demo is not seeded again. */
function alreadySeeded(): boolean {
  return (
    (getDb()
      .select({ n: sql<number>`count(*)` })
      .from(users)
      .get()?.n ?? 0) > 0
  );
}

export async function seedDemoPlant(nowMs = Date.now()): Promise<boolean> {
  if (alreadySeeded()) return false;
  const started = Date.now();
  const hashed = await hashPassword(DEMO_PASSWORD);
  const db = getDb();

  db.transaction((tx) => {
    for (const a of demoAccounts) {
      tx.insert(users)
        .values({
          email: a.email,
          name: a.name,
          role: a.role,
          phone: a.phone,
          passwordHash: hashed,
          updatedAt: nowMs,
        })
        .run();
    }
    tx.insert(gateways)
      .values({
        name: DEMO_GATEWAY.name,
        keyHash: hashKey(DEMO_GATEWAY.key),
        keyPrefix: DEMO_GATEWAY.key.slice(0, 8),
      })
      .run();

    const areaIds = new Map<string, number>();
    demoAreas.forEach((a, i) => {
      const row = tx
        .insert(areas)
        .values({ ...a, sortOrder: i })
        .returning({ id: areas.id })
        .get();
      areaIds.set(a.name, row.id);
    });
    for (const s of demoSensors) {
      tx.insert(sensors)
        .values({
          id: s.id,
          label: s.label,
          kind: s.kind,
          areaId: areaIds.get(s.area) ?? null,
          status: "active",
          material: s.material ?? null,
          batteryPct: s.kind === "embedded" ? null : 70 + (s.id.charCodeAt(4) % 30),
        })
        .run();
    }

    const qc = tx.select().from(users).where(eq(users.email, "qc@example.com")).get()!;

    // Invented reference-thermometer checks: most sensors checked in the last few months,
    // two left overdue so the sensors page has something to flag.
    demoSensors.forEach((s, i) => {
      const overdue = s.id === "CB-22" || s.id === "EP-08";
      const checkedAt = nowMs - (overdue ? 215 : 20 + ((i * 7) % 120)) * 24 * HOUR_MS;
      tx.insert(sensorCalibrations)
        .values({
          sensorId: s.id,
          checkedAt,
          checkedBy: qc.id,
          referenceTempC: 20,
          sensorTempC: 20,
          tempOffsetC: 0,
          rhOffsetPct: 0,
          nextDueAt: nextCalibrationDue(checkedAt),
          note: "Ice-point and warm-bath check against the lab reference thermometer",
        })
        .run();
    });
    const operator = tx.select().from(users).where(eq(users.email, "operator@example.com")).get()!;

    const mixIds = new Map<string, number>();
    for (const m of demoMixes) {
      const row = tx
        .insert(mixes)
        .values({
          name: m.name,
          description: m.description,
          designStrengthMpa: psiToMpa(m.designPsi),
          stripStrengthMpa: psiToMpa(m.stripPsi),
          shipStrengthMpa: psiToMpa(m.shipPsi),
          datumTempC: m.datumC,
          activationEnergyJMol: m.activationEnergyJMol,
          placingTempMinC: m.placingMinC,
          placingTempMaxC: m.placingMaxC,
          cementKgM3: m.kgM3.cement,
          scmKgM3: m.kgM3.scm,
          waterKgM3: m.kgM3.water,
          fineAggKgM3: m.kgM3.fine,
          coarseAggKgM3: m.kgM3.coarse,
          fineAggMoisturePct: m.moisturePct.fine,
          coarseAggMoisturePct: m.moisturePct.coarse,
          createdBy: qc.id,
          updatedAt: nowMs,
        })
        .returning({ id: mixes.id })
        .get();
      mixIds.set(m.name, row.id);
      // Invented breaks of lab-cured cylinders held at 23 °C (ASTM C511 moist room) from
      // moulding to the break: maturity = age × (23 − datum), and the equivalent age at 20 °C
      // by the Arrhenius function with the mix's activation energy.
      const labBreaks = m.breaks.map(([days, psi]) => ({
        days,
        ageH: days * 24,
        ttfCH: ttfAtConstantTempCH(days * 24, LAB_CURING_TEMP_C, m.datumC),
        equivalentAgeH: equivalentAgeAtConstantTempH(
          days * 24,
          LAB_CURING_TEMP_C,
          m.activationEnergyJMol,
        ),
        strengthMpa: psiToMpa(psi),
      }));
      if (labBreaks.length >= 4) {
        const fit = fitStrengthCurve(
          "log",
          labBreaks.map((b) => ({ ttfCH: b.ttfCH, strengthMpa: b.strengthMpa })),
        );
        const { model, ...params } = fit.curve;
        const cal = tx
          .insert(mixCalibrations)
          .values({
            mixId: row.id,
            model,
            paramsJson: JSON.stringify(params),
            r2: fit.r2,
            pointCount: labBreaks.length,
            warningsJson: JSON.stringify(fit.warnings),
            createdBy: qc.id,
            createdAt: nowMs - 12 * 24 * HOUR_MS,
          })
          .returning({ id: mixCalibrations.id })
          .get();
        tx.update(mixes).set({ currentCalibrationId: cal.id }).where(eq(mixes.id, row.id)).run();
      }
      for (const b of labBreaks) {
        tx.insert(calibrationPoints)
          .values({
            mixId: row.id,
            ageH: b.ageH,
            ttfCH: b.ttfCH,
            equivalentAgeH: b.equivalentAgeH,
            strengthMpa: b.strengthMpa,
            specimens: `${m.name}-CAL-${b.days}d (3 cylinders)`,
            brokenAt: nowMs - (40 - b.days) * 24 * HOUR_MS,
            createdBy: qc.id,
          })
          .run();
      }
    }

    for (const p of demoPours) {
      const castAt = nowMs - p.castHoursAgo * HOUR_MS;
      const row = tx
        .insert(pours)
        .values({
          code: p.code,
          mixId: mixIds.get(p.mix)!,
          castAt,
          status: "curing",
          bed: p.bed,
          dischargeTempC: p.placingTempC,
          slumpMm: 200,
          airPct: 2.1,
          createdBy: operator.id,
          updatedAt: castAt,
        })
        .returning({ id: pours.id })
        .get();
      for (const pr of p.products)
        tx.insert(pourProducts)
          .values({ pourId: row.id, ...pr })
          .run();
      for (const s of p.sensors) {
        tx.insert(pourSensors)
          .values({ pourId: row.id, sensorId: s, fromAt: castAt, createdBy: operator.id })
          .run();
      }
    }
  });

  setSetting("plant_name", demoPlant.name);
  setSetting("time_zone", demoPlant.timeZone);

  // History: every sensor, every five minutes, for the last six days.
  const start = Math.floor((nowMs - HISTORY_H * HOUR_MS) / HISTORY_STEP_MS) * HISTORY_STEP_MS;
  let batch: ReadingRow[] = [];
  let total = 0;
  for (const s of demoSensors) {
    let last: ReadingRow | undefined;
    for (let t = start; t <= nowMs; t += HISTORY_STEP_MS) {
      const r = demoReading(s, t, nowMs);
      last = {
        sensorId: s.id,
        ts: t,
        tempC: r.tempC,
        rhPct: r.rhPct,
        source: "demo",
        receivedAt: t,
      };
      batch.push(last);
      if (batch.length >= 5_000) {
        total += insertReadings(batch);
        batch = [];
      }
    }
    if (last) {
      db.update(sensors)
        .set({ lastSeenAt: last.ts, lastTempC: last.tempC, lastRhPct: last.rhPct })
        .where(eq(sensors.id, s.id))
        .run();
    }
  }
  total += insertReadings(batch);
  // QC's past strip sign-offs of the two oldest pours, on the readings just stored.
  seedDemoReleases(nowMs);
  // Default alert rules and the operator on call around the clock.
  seedDemoAlerting();

  writeAudit({ label: "system" }, { action: "demo.seeded", detail: { readings: total } }, nowMs);
  log.info("demo plant seeded", { readings: total, ms: Date.now() - started });
  return true;
}
