/**
 * The invented demo plant: its areas, sensors, mixes and pours, and what each sensor
 * reads at any moment. Used by the demo seed (history) and the simulator (live feed).
 * Every name and number here is made up for the demonstration.
 */
import {
  bagRhPct,
  bagTempC,
  binTempC,
  clamp,
  concreteCoreTempC,
  enclosureTempC,
  noise,
  outdoorTempC,
  round1,
  type HydrationProfile,
} from "./physics";

const HOUR_MS = 3_600_000;

export const demoPlant = {
  name: "Brindle Hollow Precast",
  timeZone: "America/Chicago",
  /** Winter: cold nights in the yard. */
  outdoor: { meanC: 4, swingC: 6, utcOffsetH: -6 },
  rooms: { "Cure Room 1": 23, "Cure Room 2": 21 } as Record<string, number>,
  roomRhPct: 45,
} as const;

export interface DemoArea {
  name: string;
  kind: "cure_room" | "yard" | "bin_area";
  description: string;
}

export const demoAreas: DemoArea[] = [
  { name: "Cure Room 1", kind: "cure_room", description: "Heated enclosure, beds 1 to 3" },
  { name: "Cure Room 2", kind: "cure_room", description: "Heated enclosure, beds 4 to 6" },
  { name: "Aggregate Bins", kind: "bin_area", description: "Covered bins beside the batch plant" },
  { name: "Yard", kind: "yard", description: "Storage yard, open air" },
];

export interface DemoSensor {
  id: string;
  label: string;
  kind: "bag" | "embedded" | "bin" | "ambient";
  area: string;
  material?: string;
}

function range(prefix: string, from: number, to: number): string[] {
  const out: string[] = [];
  for (let i = from; i <= to; i++) out.push(`${prefix}-${String(i).padStart(2, "0")}`);
  return out;
}

export const demoSensors: DemoSensor[] = [
  ...range("CB", 1, 12).map((id, i) => ({
    id,
    label: `Bag ${i + 1}, room 1`,
    kind: "bag" as const,
    area: "Cure Room 1",
  })),
  ...range("CB", 13, 24).map((id, i) => ({
    id,
    label: `Bag ${i + 1}, room 2`,
    kind: "bag" as const,
    area: "Cure Room 2",
  })),
  ...range("EP", 1, 4).map((id, i) => ({
    id,
    label: `Probe ${i + 1}, room 1`,
    kind: "embedded" as const,
    area: "Cure Room 1",
  })),
  ...range("EP", 5, 8).map((id, i) => ({
    id,
    label: `Probe ${i + 1}, room 2`,
    kind: "embedded" as const,
    area: "Cure Room 2",
  })),
  {
    id: "AB-01",
    label: "Bin 1, concrete sand",
    kind: "bin",
    area: "Aggregate Bins",
    material: "fine",
  },
  {
    id: "AB-02",
    label: "Bin 2, 3/4 in. stone",
    kind: "bin",
    area: "Aggregate Bins",
    material: "coarse",
  },
  {
    id: "AB-03",
    label: "Bin 3, 3/8 in. chip",
    kind: "bin",
    area: "Aggregate Bins",
    material: "coarse",
  },
  {
    id: "AB-04",
    label: "Bin 4, mason sand",
    kind: "bin",
    area: "Aggregate Bins",
    material: "fine",
  },
  { id: "AM-01", label: "Room 1 air", kind: "ambient", area: "Cure Room 1" },
  { id: "AM-02", label: "Room 2 air", kind: "ambient", area: "Cure Room 2" },
  { id: "AM-03", label: "Yard air", kind: "ambient", area: "Yard" },
];

/** Strengths in psi here because the demo plant thinks in psi; the seed stores MPa. */
export interface DemoMix {
  name: string;
  description: string;
  designPsi: number;
  stripPsi: number;
  shipPsi: number;
  datumC: number;
  activationEnergyJMol: number;
  placingMinC: number;
  placingMaxC: number;
  kgM3: { cement: number; scm: number; water: number; fine: number; coarse: number };
  moisturePct: { fine: number; coarse: number };
  hydration: Omit<HydrationProfile, "placingTempC">;
  /** Invented lab breaks at 23 °C: [age in days, mean strength psi]. */
  breaks: [number, number][];
}

export const demoMixes: DemoMix[] = [
  {
    name: "HS-10",
    description: "High-strength mix for post bases and anchor pieces",
    designPsi: 10_000,
    stripPsi: 3_500,
    shipPsi: 7_500,
    datumC: -10,
    activationEnergyJMol: 41_570,
    placingMinC: 10,
    placingMaxC: 32,
    kgM3: { cement: 505, scm: 90, water: 160, fine: 740, coarse: 1_010 },
    moisturePct: { fine: 5, coarse: 1 },
    hydration: { peakRiseC: 24, peakAgeH: 13 },
    breaks: [
      [1, 4_150],
      [3, 6_900],
      [7, 8_650],
      [14, 9_700],
      [28, 10_850],
    ],
  },
  {
    name: "FC-8",
    description: "Foundation columns",
    designPsi: 8_000,
    stripPsi: 3_000,
    shipPsi: 6_000,
    datumC: -10,
    activationEnergyJMol: 41_570,
    placingMinC: 10,
    placingMaxC: 32,
    kgM3: { cement: 440, scm: 75, water: 165, fine: 780, coarse: 1_020 },
    moisturePct: { fine: 5, coarse: 1 },
    hydration: { peakRiseC: 19, peakAgeH: 14 },
    breaks: [
      [1, 3_200],
      [3, 5_500],
      [7, 6_900],
      [28, 8_700],
    ],
  },
  {
    name: "GP-5",
    description: "General precast, 5,000 psi",
    designPsi: 5_000,
    stripPsi: 2_500,
    shipPsi: 4_000,
    datumC: -10,
    activationEnergyJMol: 41_570,
    placingMinC: 10,
    placingMaxC: 32,
    kgM3: { cement: 360, scm: 0, water: 170, fine: 820, coarse: 1_050 },
    moisturePct: { fine: 5, coarse: 1 },
    hydration: { peakRiseC: 14, peakAgeH: 15 },
    breaks: [],
  },
];

export interface DemoPour {
  code: string;
  mix: string;
  /** Hours before "now" the pour was cast. */
  castHoursAgo: number;
  placingTempC: number;
  bed: string;
  products: { product: string; pieceCount: number }[];
  sensors: string[];
  /** A bag whose pads dry out this many hours after casting (the night-shift story). */
  dryBag?: { sensor: string; afterH: number };
}

export const demoPours: DemoPour[] = [
  {
    code: "P-2611-01",
    mix: "HS-10",
    castHoursAgo: 130,
    placingTempC: 21,
    bed: "Bed 1",
    products: [{ product: "Post base 8 in.", pieceCount: 24 }],
    sensors: ["CB-01", "CB-02", "CB-03", "EP-01"],
  },
  {
    code: "P-2611-02",
    mix: "FC-8",
    castHoursAgo: 74,
    placingTempC: 20,
    bed: "Bed 2",
    products: [
      { product: "Foundation column 12 in.", pieceCount: 10 },
      { product: "Foundation column 16 in.", pieceCount: 4 },
    ],
    sensors: ["CB-04", "CB-05", "CB-06", "EP-02"],
  },
  {
    code: "P-2611-03",
    mix: "HS-10",
    castHoursAgo: 27,
    placingTempC: 22,
    bed: "Bed 4",
    products: [{ product: "Post base 6 in.", pieceCount: 36 }],
    sensors: ["CB-13", "CB-14", "CB-15", "EP-05"],
  },
  {
    code: "P-2611-04",
    mix: "HS-10",
    castHoursAgo: 11,
    placingTempC: 23,
    bed: "Bed 5",
    products: [
      { product: "Post base 8 in.", pieceCount: 18 },
      { product: "Anchor block", pieceCount: 6 },
    ],
    sensors: ["CB-16", "CB-17", "CB-18", "EP-06"],
    dryBag: { sensor: "CB-17", afterH: 7 },
  },
  {
    code: "P-2611-05",
    mix: "GP-5",
    castHoursAgo: 50,
    placingTempC: 19,
    bed: "Bed 3",
    products: [{ product: "Pier cap", pieceCount: 8 }],
    sensors: ["CB-07", "CB-08", "EP-03"],
  },
];

export interface SensorReading {
  tempC: number;
  rhPct: number | null;
}

/**
 * What a demo sensor reads at `tMs`, given when the demo's "now" is (pours are placed
 * relative to it). Before its pour is cast a bag or probe reads the room.
 */
export function demoReading(sensor: DemoSensor, tMs: number, nowMs: number): SensorReading {
  const { outdoor } = demoPlant;
  const step = Math.floor(tMs / 60_000);
  const jitter = (scale: number) => noise(sensor.id, step) * scale;
  const outdoorC = outdoorTempC(tMs, outdoor.meanC, outdoor.swingC, outdoor.utcOffsetH);
  const setPoint = demoPlant.rooms[sensor.area];
  const roomC = setPoint === undefined ? outdoorC : enclosureTempC(setPoint, outdoorC);

  if (sensor.kind === "bin") {
    const c = binTempC(tMs, outdoor.meanC + 2, outdoor.swingC, outdoor.utcOffsetH);
    return { tempC: round1(c + jitter(0.15)), rhPct: null };
  }
  if (sensor.kind === "ambient") {
    const rh = setPoint === undefined ? 70 - (outdoorC - outdoor.meanC) * 3 : demoPlant.roomRhPct;
    return { tempC: round1(roomC + jitter(0.2)), rhPct: round1(clamp(rh + jitter(1.5), 5, 100)) };
  }
  const pour = demoPours.find((p) => p.sensors.includes(sensor.id));
  const castMs = pour ? nowMs - pour.castHoursAgo * HOUR_MS : null;
  if (!pour || castMs === null || tMs < castMs) {
    const rh = sensor.kind === "bag" ? demoPlant.roomRhPct + 5 : null;
    return {
      tempC: round1(roomC + jitter(0.2)),
      rhPct: rh === null ? null : round1(rh + jitter(1)),
    };
  }
  const mix = demoMixes.find((m) => m.name === pour.mix)!;
  const ageH = (tMs - castMs) / HOUR_MS;
  const profile = { ...mix.hydration, placingTempC: pour.placingTempC };
  const coreC = concreteCoreTempC(ageH, roomC, profile);
  if (sensor.kind === "embedded") return { tempC: round1(coreC + jitter(0.1)), rhPct: null };
  const dryFrom = pour.dryBag?.sensor === sensor.id ? castMs + pour.dryBag.afterH * HOUR_MS : null;
  const rh = bagRhPct(tMs, demoPlant.roomRhPct, dryFrom);
  return {
    tempC: round1(bagTempC(coreC, roomC) + jitter(0.2)),
    rhPct: round1(clamp(rh + jitter(0.6), 0, 100)),
  };
}
