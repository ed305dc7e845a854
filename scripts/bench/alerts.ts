/**
 * Benchmark 7: a reading past a rule to the text on the operator's phone. Plinth runs in demo
 * mode (the demo plant, its default alert rules, the demo operator on call around the clock,
 * the local SMS fake inside Plinth's own process) with the simulator off, so only the bench's
 * readings arrive.
 *
 * Each episode posts, through the demo gateway, one reading of a bag sensor on a curing pour
 * at rh 90 %: below the "Dry cure bag" rule (rh under 95 %, no hold), so it opens an episode
 * and the operator is texted. Its latency is the time the SMS fake received that text (its
 * own receipt time, `sent_at` of GET /api/v1/dev/outbox) minus the time the post started in
 * the bench: both are this machine's clock in epoch ms. A wet reading (rh 98 %) then clears
 * the episode, and the bench waits for the "cleared by itself" text that follows, so every
 * episode starts with the sender idle. The limit: the HTTP round trip of the same reading
 * crossing nothing (rh 98 % on the same sensor, its track quiet), posted just before.
 *
 * Honesty checks: exactly one opening text ("ALARM", the rule, the sensor) per episode, none
 * on any other episode's window, one `alert` opened event on the live feed per episode, and
 * every cleared text too; anything lost or doubled fails both rows.
 */
import { performance } from "node:perf_hooks";
import path from "node:path";
import { call, signIn } from "../../tests/helpers/server";
import { tempFolder } from "./cleanup";
import type { Sizes } from "./options";
import { startPlinth, type BenchPlinth } from "./plinth";
import { progressReporter, say } from "./progress";
import type { BenchResult } from "./result";
import { connectLive } from "./sse";
import { median, percentile, round, worst } from "./stats";

/** The demo plant's accounts, gateway and rota, as src/lib/server/demo/seed.ts and alerts.ts make them. */
const DEMO_MANAGER = "manager@example.com";
const DEMO_GATEWAY_KEY = "demo-gateway-key-0001";
const OPERATOR_PHONE = "+15550100003";
const DRY_BAG_RULE = "Dry cure bag";

const TARGET_WORST_MS = 2_000;
/** Below the rule's 95 %: opens an episode at once (no hold). */
const DRY_RH = 90;
/** Above 95 % + the clearing margin 1.5: crosses nothing on a quiet track, clears an active one. */
const WET_RH = 98;
/** How long a text may take before it counts as lost. */
const TEXT_WAIT_MS = 10_000;
/** How often the dev outbox is read while a text is awaited. */
const POLL_MS = 20;
/** Quiet before the final count: longer than the notice worker's 1 s poll. */
const SETTLE_MS = 1_500;
/** This many texts lost in a row stops the run: something is broken, not slow. */
const MAX_LOST_IN_A_ROW = 3;

interface Text {
  to: string;
  body: string;
  sentAtMs: number;
}

interface Episode {
  sensor: string;
  warmup: boolean;
  /** Before the bare reading: the start of this episode's window for the final count. */
  windowStartMs: number;
  bareRoundTripMs: number;
  /** Epoch ms when the dry reading's post started. */
  postStartMs: number;
  dryRoundTripMs: number;
  dryTsMs: number;
  textAtMs: number | null;
  clearedTextAtMs: number | null;
}

interface LiveFeed {
  /** committed_at of each reading seen, keyed by "sensor|ts". */
  committedAt: Map<string, number>;
  /** `alert` opened events of the dry-bag rule: sensor and the bench's receive time. */
  opened: { sensor: string; receivedAtMs: number }[];
  close: () => void;
}

const keyOf = (sensor: string, tsMs: number) => `${sensor}|${tsMs}`;

/** Opens the live feed as the manager; resolves once its `hello` event arrived. */
async function openLive(plinth: BenchPlinth, cookie: string, ruleId: number): Promise<LiveFeed> {
  const committedAt: LiveFeed["committedAt"] = new Map();
  const opened: LiveFeed["opened"] = [];
  const { close } = await connectLive(plinth.url, cookie, ({ event, data }, receivedAtMs) => {
    if (event === "readings") {
      for (const r of JSON.parse(data) as { sensor: string; ts: number; committed_at: number }[])
        committedAt.set(keyOf(r.sensor, r.ts), r.committed_at);
    } else if (event === "alert") {
      const a = JSON.parse(data) as { change: string; rule_id: number; sensor: string | null };
      if (a.change === "opened" && a.rule_id === ruleId && a.sensor)
        opened.push({ sensor: a.sensor, receivedAtMs });
    }
  });
  return { committedAt, opened, close };
}

async function getJson<T>(plinth: BenchPlinth, cookie: string, pathName: string): Promise<T> {
  const res = await call(plinth.url, cookie, pathName);
  const text = await res.text();
  if (res.status !== 200)
    throw new Error(`GET ${pathName} answered ${res.status}: ${text.slice(0, 500)}`);
  return JSON.parse(text) as T;
}

/** The texts the SMS fake received (GET /api/v1/dev/outbox, newest first). */
async function texts(plinth: BenchPlinth, cookie: string): Promise<Text[]> {
  const items = await getJson<{ channel: string; to: string; body: string; sent_at: string }[]>(
    plinth,
    cookie,
    "/api/v1/dev/outbox",
  );
  return items
    .filter((i) => i.channel === "sms")
    .map((i) => ({ to: i.to, body: i.body, sentAtMs: Date.parse(i.sent_at) }));
}

const mentions = (body: string, sensor: string) =>
  new RegExp(`(^|[^A-Za-z0-9-])${sensor}([^A-Za-z0-9-]|$)`).test(body);

/** The episode's first text: "Plinth ALARM: <sensor> ...: Dry cure bag: ...". */
const isOpening = (t: Text, sensor: string) =>
  t.to === OPERATOR_PHONE &&
  t.body.includes("ALARM") &&
  t.body.includes(DRY_BAG_RULE) &&
  mentions(t.body, sensor);

/** The text that says an unacknowledged episode cleared by itself. */
const isClearedText = (t: Text, sensor: string) =>
  t.to === OPERATOR_PHONE &&
  t.body.includes("cleared by itself") &&
  t.body.includes(DRY_BAG_RULE) &&
  mentions(t.body, sensor);

/** Reads the outbox until a text matches (received at or after `sinceMs`); null after the wait. */
async function waitForText(
  plinth: BenchPlinth,
  cookie: string,
  match: (t: Text) => boolean,
  sinceMs: number,
): Promise<Text | null> {
  const deadline = Date.now() + TEXT_WAIT_MS;
  for (;;) {
    const found = (await texts(plinth, cookie)).filter((t) => t.sentAtMs >= sinceMs && match(t));
    // Newest first: the earliest match is the last.
    if (found.length > 0) return found[found.length - 1]!;
    if (Date.now() > deadline) return null;
    await new Promise((r) => setTimeout(r, POLL_MS));
  }
}

/** Waits until the fake has received no new text for `quietMs` (at most `maxMs`). */
async function waitQuiet(plinth: BenchPlinth, cookie: string, quietMs: number, maxMs: number) {
  const deadline = Date.now() + maxMs;
  let count = (await texts(plinth, cookie)).length;
  let since = Date.now();
  while (Date.now() - since < quietMs) {
    if (Date.now() > deadline) throw new Error(`texts kept arriving for ${maxMs / 1000} s`);
    await new Promise((r) => setTimeout(r, 100));
    const now = (await texts(plinth, cookie)).length;
    if (now !== count) {
      count = now;
      since = Date.now();
    }
  }
}

interface Bag {
  id: string;
  tempC: number;
  lastTsMs: number;
}

/** Bag sensors on curing pours, with their last temperature and reading time. */
async function curingBags(plinth: BenchPlinth, cookie: string): Promise<Bag[]> {
  const { pours } = await getJson<{ pours: { code: string; sensors: string[] }[] }>(
    plinth,
    cookie,
    "/api/v1/pours?status=curing",
  );
  const onCuring = new Set(pours.flatMap((p) => p.sensors));
  const sensors = await getJson<
    {
      id: string;
      kind: string | null;
      status: string;
      last_seen_at: string | null;
      last_temp_c: number | null;
    }[]
  >(plinth, cookie, "/api/v1/sensors");
  return sensors
    .filter((s) => s.kind === "bag" && s.status !== "retired" && onCuring.has(s.id))
    .map((s) => ({
      id: s.id,
      // The bag's own temperature, so no temperature rule is crossed by the bench's readings.
      tempC: s.last_temp_c ?? 25,
      lastTsMs: s.last_seen_at ? Date.parse(s.last_seen_at) : 0,
    }));
}

/** The dry-bag rule's id, after checking it is the rule the benchmark means. */
async function dryBagRuleId(plinth: BenchPlinth, cookie: string): Promise<number> {
  const { rules } = await getJson<{
    rules: {
      id: number;
      name: string;
      kind: string;
      threshold: number | null;
      hold_min: number;
      clear_margin: number;
      severity: string;
      enabled: boolean;
    }[];
  }>(plinth, cookie, "/api/v1/alert-rules");
  const rule = rules.find((r) => r.name === DRY_BAG_RULE && r.enabled);
  if (!rule) throw new Error(`the demo plant has no enabled rule "${DRY_BAG_RULE}"`);
  const fits =
    rule.kind === "rh_low" &&
    rule.threshold !== null &&
    DRY_RH < rule.threshold &&
    WET_RH >= rule.threshold + rule.clear_margin &&
    rule.hold_min === 0 &&
    rule.severity === "critical";
  if (!fits)
    throw new Error(
      `"${DRY_BAG_RULE}" is not rh < ${DRY_RH + 1}..${WET_RH - 1} % with no hold: ${JSON.stringify(rule)}`,
    );
  return rule.id;
}

class Poster {
  private readonly last = new Map<string, number>();
  constructor(
    private readonly plinth: BenchPlinth,
    bags: readonly Bag[],
  ) {
    for (const b of bags) this.last.set(b.id, b.lastTsMs);
  }

  /** The next reading time for a sensor: now, or just after its newest reading. */
  nextTs(sensor: string): number {
    const ts = Math.max(Date.now(), (this.last.get(sensor) ?? 0) + 1);
    this.last.set(sensor, ts);
    return ts;
  }

  /** Posts one reading through the demo gateway; returns its round trip in ms. */
  async post(bag: Bag, tsMs: number, rhPct: number): Promise<number> {
    const body = JSON.stringify({
      readings: [
        { sensor: bag.id, ts: new Date(tsMs).toISOString(), temp_c: bag.tempC, rh: rhPct },
      ],
    });
    const t0 = performance.now();
    const res = await fetch(`${this.plinth.url}/api/v1/readings`, {
      method: "POST",
      headers: { authorization: `Bearer ${DEMO_GATEWAY_KEY}`, "content-type": "application/json" },
      body,
    });
    const text = await res.text();
    const ms = performance.now() - t0;
    if (res.status !== 200 || (JSON.parse(text) as { accepted: number }).accepted !== 1)
      throw new Error(`POST /api/v1/readings answered ${res.status}: ${text.slice(0, 500)}`);
    return ms;
  }
}

interface Counts {
  /** Episodes whose window held exactly one opening text for their sensor and none for another. */
  exact: number;
  /** Opening texts beyond one in an episode's window (doubles, or texts about another sensor). */
  extra: number;
  /** Episodes whose opening text never came. */
  lost: number;
  /** Episodes whose "cleared by itself" text never came. */
  clearedLost: number;
  /** Episodes without exactly one `alert` opened event on the live feed. */
  eventMismatch: number;
}

/** The final count, after the run settled: every text the fake received, window by window. */
function countTexts(all: readonly Text[], episodes: readonly Episode[], live: LiveFeed): Counts {
  const counts: Counts = { exact: 0, extra: 0, lost: 0, clearedLost: 0, eventMismatch: 0 };
  const sensors = [...new Set(episodes.map((e) => e.sensor))];
  episodes.forEach((e, i) => {
    const end = episodes[i + 1]?.windowStartMs ?? Number.POSITIVE_INFINITY;
    const inWindow = (ms: number) => ms >= e.windowStartMs && ms < end;
    const own = all.filter((t) => inWindow(t.sentAtMs) && isOpening(t, e.sensor)).length;
    const others = all.filter(
      (t) => inWindow(t.sentAtMs) && sensors.some((s) => s !== e.sensor && isOpening(t, s)),
    ).length;
    if (own === 1 && others === 0) counts.exact++;
    if (own === 0) counts.lost++;
    counts.extra += Math.max(0, own - 1) + others;
    if (e.clearedTextAtMs === null) counts.clearedLost++;
    const events = live.opened.filter(
      (o) => o.sensor === e.sensor && inWindow(o.receivedAtMs),
    ).length;
    if (events !== 1) counts.eventMismatch++;
  });
  return counts;
}

interface AlertRun {
  episodes: Episode[];
  counts: Counts;
  bags: string[];
  /** Per measured episode: post start to commit (committed_at on the live feed). */
  commitMs: number[];
  /** Per measured episode: commit to the text at the fake. */
  commitToTextMs: number[];
  /** The slowest measured episodes, each step of the way, for finding why. */
  slowest: Record<string, number | string | null>[];
  peakRssMib: number;
  rssAtStartMib: number;
}

async function measure(sizes: Sizes): Promise<AlertRun> {
  const dbPath = path.join(tempFolder("alerts"), "plinth.db");
  say("  starting Plinth in demo mode (seeding the demo plant)…");
  const plinth = await startPlinth(dbPath, {
    demo: true,
    // The simulator's readings would race the bench's; the fakes receive the texts.
    env: { PLINTH_SIMULATOR: "0", NOTIFY_FAKES: "1" },
  });
  let live: LiveFeed | undefined;
  try {
    const cookie = await signIn(plinth.url, DEMO_MANAGER);
    const ruleId = await dryBagRuleId(plinth, cookie);
    const bags = await curingBags(plinth, cookie);
    if (bags.length === 0) throw new Error("the demo plant has no bag sensor on a curing pour");
    live = await openLive(plinth, cookie, ruleId);
    const poster = new Poster(plinth, bags);

    // Wet every bag first: an episode open since the demo's start (its dry bag) clears, and
    // its texts arrive before the measured ones begin.
    for (const bag of bags) await poster.post(bag, poster.nextTs(bag.id), WET_RH);
    await waitQuiet(plinth, cookie, SETTLE_MS, 30_000);
    const active = await getJson<{ sensor: string | null; rule_id: number }[]>(
      plinth,
      cookie,
      "/api/v1/alerts?state=active",
    );
    const stillActive = active.filter(
      (a) => a.rule_id === ruleId && bags.some((b) => b.id === a.sensor),
    );
    if (stillActive.length > 0)
      throw new Error(
        `wet readings left ${stillActive.map((a) => a.sensor).join(", ")} with an active episode`,
      );
    say(
      `  ${bags.length} curing bags (${bags.map((b) => b.id).join(", ")}); ${sizes.alertEpisodes} episodes (+${sizes.alertWarmupEpisodes} warm-up)`,
    );

    const episodes: Episode[] = [];
    const total = sizes.alertWarmupEpisodes + sizes.alertEpisodes;
    const report = progressReporter("episodes", total, "episodes");
    let lostInARow = 0;
    for (let i = 0; i < total; i++) {
      const bag = bags[i % bags.length]!;
      const windowStartMs = Date.now();
      const bareRoundTripMs = await poster.post(bag, poster.nextTs(bag.id), WET_RH);
      const dryTsMs = poster.nextTs(bag.id);
      const postStartMs = Date.now();
      const dryRoundTripMs = await poster.post(bag, dryTsMs, DRY_RH);
      const text = await waitForText(plinth, cookie, (t) => isOpening(t, bag.id), postStartMs);
      const clearStartMs = Date.now();
      await poster.post(bag, poster.nextTs(bag.id), WET_RH);
      const cleared = await waitForText(
        plinth,
        cookie,
        (t) => isClearedText(t, bag.id),
        clearStartMs,
      );
      episodes.push({
        sensor: bag.id,
        warmup: i < sizes.alertWarmupEpisodes,
        windowStartMs,
        bareRoundTripMs,
        postStartMs,
        dryRoundTripMs,
        dryTsMs,
        textAtMs: text?.sentAtMs ?? null,
        clearedTextAtMs: cleared?.sentAtMs ?? null,
      });
      lostInARow = text ? 0 : lostInARow + 1;
      if (!text) say(`  episode ${i + 1} on ${bag.id}: no text in ${TEXT_WAIT_MS / 1000} s`);
      if (lostInARow >= MAX_LOST_IN_A_ROW)
        throw new Error(
          `${MAX_LOST_IN_A_ROW} episodes in a row sent no text; Plinth's last output:\n${plinth.output().slice(-3_000)}`,
        );
      report(i + 1);
    }

    // Anything late (a second text, a retry) has time to arrive before the count.
    await new Promise((r) => setTimeout(r, SETTLE_MS));
    const counts = countTexts(await texts(plinth, cookie), episodes, live);
    const measured = episodes.filter((e) => !e.warmup && e.textAtMs !== null);
    const commitMs: number[] = [];
    const commitToTextMs: number[] = [];
    const firstStartMs = episodes[0]?.windowStartMs ?? 0;
    const steps = measured.map((e) => {
      const committed = live!.committedAt.get(keyOf(e.sensor, e.dryTsMs));
      if (committed !== undefined) {
        commitMs.push(committed - e.postStartMs);
        commitToTextMs.push(e.textAtMs! - committed);
      }
      return {
        sensor: e.sensor,
        started_s: round((e.postStartMs - firstStartMs) / 1000, 1),
        to_text_ms: e.textAtMs! - e.postStartMs,
        to_commit_ms: committed === undefined ? null : committed - e.postStartMs,
        round_trip_ms: round(e.dryRoundTripMs, 1),
        bare_round_trip_ms: round(e.bareRoundTripMs, 1),
      };
    });
    const slowest = steps.sort((a, b) => b.to_text_ms - a.to_text_ms).slice(0, 3);
    return {
      episodes,
      counts,
      bags: bags.map((b) => b.id),
      commitMs,
      commitToTextMs,
      slowest,
      peakRssMib: plinth.peakRssMib(),
      rssAtStartMib: plinth.rssAtStartMib,
    };
  } finally {
    live?.close();
    await plinth.stop();
  }
}

const summary = (values: readonly number[]) => ({
  median: round(median(values)),
  p90: round(percentile(values, 90)),
  worst: round(worst(values)),
});

export async function benchAlerts(sizes: Sizes): Promise<BenchResult[]> {
  say(
    `Plinth (demo plant, simulator off): ${sizes.alertEpisodes} dry-bag episodes, each a reading at rh ${DRY_RH} % to the text at the SMS fake`,
  );
  const run = await measure(sizes);
  const measured = run.episodes.filter((e) => !e.warmup);
  const latencyMs = measured.flatMap((e) =>
    e.textAtMs === null ? [] : [e.textAtMs - e.postStartMs],
  );
  const bareMs = measured.map((e) => e.bareRoundTripMs);
  const dryMs = measured.map((e) => e.dryRoundTripMs);
  const { counts } = run;
  const allExact = counts.exact === run.episodes.length && counts.clearedLost === 0;
  const feedExact = counts.eventMismatch === 0;
  const worstMs = worst(latencyMs);
  say(
    `  reading to text: median ${median(latencyMs)} ms, worst ${worstMs} ms; bare commit round trip median ${median(bareMs).toFixed(2)} ms, worst ${worst(bareMs).toFixed(2)} ms`,
  );
  say(
    `  texts: ${counts.exact} of ${run.episodes.length} episodes with exactly one opening text, ${counts.lost} lost, ${counts.extra} extra; ${counts.clearedLost} cleared texts lost; ${counts.eventMismatch} episodes without exactly one opened event`,
  );
  const problems = [
    counts.lost > 0 ? `${counts.lost} opening texts lost` : null,
    counts.extra > 0 ? `${counts.extra} opening texts extra` : null,
    counts.clearedLost > 0 ? `${counts.clearedLost} cleared texts lost` : null,
    !feedExact ? `${counts.eventMismatch} episodes without exactly one opened event` : null,
  ].filter((p): p is string => p !== null);
  const details: Record<string, unknown> = {
    episodes: sizes.alertEpisodes,
    warmup_episodes: sizes.alertWarmupEpisodes,
    bags: run.bags,
    rule: DRY_BAG_RULE,
    texts_exactly_one: counts.exact,
    texts_lost: counts.lost,
    texts_extra: counts.extra,
    cleared_texts_lost: counts.clearedLost,
    opened_event_mismatches: counts.eventMismatch,
    reading_to_text_ms: summary(latencyMs),
    worst_over_target: round(worstMs / TARGET_WORST_MS, 4),
    bare_commit_round_trip_ms: summary(bareMs),
    crossing_reading_round_trip_ms: summary(dryMs),
    post_start_to_commit_ms: summary(run.commitMs),
    commit_to_text_ms: summary(run.commitToTextMs),
    warmup_reading_to_text_ms: run.episodes
      .filter((e) => e.warmup)
      .map((e) => (e.textAtMs === null ? null : e.textAtMs - e.postStartMs)),
    slowest_episodes: run.slowest,
    clock_resolution_ms: 1,
    plinth_rss_at_start_mib: round(run.rssAtStartMib, 1),
    plinth_peak_rss_mib: round(run.peakRssMib, 1),
  };
  if (problems.length > 0) details.warning = problems.join("; ");
  const pass = worstMs < TARGET_WORST_MS && allExact && feedExact;
  const row = (which: "median" | "worst", figure: number, limit: number): BenchResult => ({
    name: `alert-text-${which}`,
    title: `reading past a rule (no hold) to the text at the SMS fake, ${which}`,
    figure,
    unit: "ms",
    limit,
    limitLabel: `HTTP round trip of a reading crossing nothing, ${which}`,
    ratio: figure / limit,
    target: `worst < ${TARGET_WORST_MS} ms (${(worstMs / TARGET_WORST_MS).toFixed(3)} of it), one text each`,
    pass,
    details,
  });
  return [row("median", median(latencyMs), median(bareMs)), row("worst", worstMs, worst(bareMs))];
}
