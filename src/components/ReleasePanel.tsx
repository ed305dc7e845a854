import { useEffect, useRef, useState } from "react";
import {
  decideRelease,
  releaseKindLabels,
  releaseKinds,
  type PourStatus,
  type ReleaseDecision,
  type ReleaseKind,
} from "@/domain/release";
import { psiToMpa, type UnitSystem } from "@/domain/units";
import type { PourStrength } from "@/lib/server/strength/pourStrength";
import type { PresentedRelease } from "@/lib/server/strength/releases";
import Field from "./Field";
import {
  pourStatusLabels,
  RELEASE_RECORDED_EVENT,
  type ReleaseRecordedDetail,
} from "./PourStrengthView";
import ReleaseBadge from "./ReleaseBadge";
import { strengthText, whenText } from "./ReleaseFormat";

export type ReleaseRecord = Omit<PresentedRelease, "basis">;

interface Props {
  pourId: number;
  pourCode: string;
  pourStatus: PourStatus;
  releases: ReleaseRecord[];
  canRelease: boolean;
  units: UnitSystem;
  timeZone: string;
  nowMs: number;
  caution: string;
  initialView: PourStrength;
}

const statusLabels = pourStatusLabels;

/** The client's reading of the decision, from a strength view; the server decides again. */
function decideFromView(
  view: PourStrength,
  kind: ReleaseKind,
  status: PourStatus,
  released: ReleaseKind[],
  overrideReason: string,
): ReleaseDecision {
  const governing = view.sensors.find((s) => s.sensor === view.governing_sensor);
  const psi = governing?.strength_psi ?? null;
  return decideRelease({
    kind,
    pourStatus: status,
    released,
    calibrated: view.calibrated,
    estimateMpa: psi === null ? null : psiToMpa(psi),
    thresholdMpa: psiToMpa(view[kind].threshold_psi),
    completeRecord: view.complete_record,
    overrideReason,
  });
}

function ReleaseRecordCard({
  r,
  units,
  timeZone,
  nowMs,
}: {
  r: ReleaseRecord;
  units: UnitSystem;
  timeZone: string;
  nowMs: number;
}) {
  const overridden = r.overridden.length > 0;
  return (
    <li className="card p-4" data-testid={`release-${r.kind}`}>
      <div className="flex flex-wrap items-center gap-2">
        <h3 className="text-lg font-bold">{releaseKindLabels[r.kind]} release</h3>
        <ReleaseBadge tone="ok" label="Signed off" />
        {overridden && <ReleaseBadge tone="warn" label="Override" />}
        {r.complete_record === false && <ReleaseBadge tone="warn" label="Record incomplete" />}
      </div>
      <p className="mt-1">
        By <span className="font-semibold">{r.released_by.name}</span>{" "}
        <span className="text-muted">({r.released_by.email})</span>,{" "}
        {whenText(Date.parse(r.released_at), timeZone, nowMs)}
      </p>
      <dl className="mt-2 grid grid-cols-1 gap-x-6 gap-y-1 text-sm sm:grid-cols-2">
        <div className="flex justify-between gap-2">
          <dt className="text-muted">Estimate</dt>
          <dd className="figure font-semibold">
            {r.estimate_psi === null
              ? "none (not calibrated)"
              : strengthText(r.estimate_psi, units)}
            {r.governing_sensor ? ` at ${r.governing_sensor}` : ""}
          </dd>
        </div>
        <div className="flex justify-between gap-2">
          <dt className="text-muted">{releaseKindLabels[r.kind]} strength</dt>
          <dd className="figure font-semibold">{strengthText(r.threshold_psi, units)}</dd>
        </div>
        <div className="flex justify-between gap-2">
          <dt className="text-muted">Temperature-time factor</dt>
          <dd className="figure">{r.ttf_c_h === null ? "—" : `${r.ttf_c_h.toFixed(1)} °C·h`}</dd>
        </div>
        <div className="flex justify-between gap-2">
          <dt className="text-muted">Equivalent age</dt>
          <dd className="figure">
            {r.equivalent_age_h === null ? "—" : `${r.equivalent_age_h.toFixed(2)} h`}
          </dd>
        </div>
      </dl>
      {overridden && (
        <div className="mt-2 rounded-md bg-warn-bg p-2 text-sm text-warn">
          <p className="font-bold">Overrode: {r.overridden.map((o) => o.message).join(" ")}</p>
          <p>Reason given: “{r.override_reason}”</p>
        </div>
      )}
      {!overridden && r.override_reason && (
        <p className="mt-2 text-sm">Reason given: “{r.override_reason}”</p>
      )}
      {r.missing.length > 0 && (
        <p className="mt-2 text-sm">
          Missing from the record then:{" "}
          {r.missing.map((m) => `${m.sensor} (${m.kind.replace("-", " ")})`).join(", ")}
        </p>
      )}
      {r.note && <p className="mt-2 text-sm">Note: {r.note}</p>}
      <p className="hint mt-2">{r.caution}</p>
    </li>
  );
}

/**
 * The pour's strip and ship sign-offs: the releases made, and for QC and managers the form to
 * make one: kind, note, and an override reason that appears when the estimate does not support
 * the release; a confirmation repeats the caution before anything is recorded.
 */
export default function ReleasePanel({
  pourId,
  pourCode,
  pourStatus: initialStatus,
  releases: initialReleases,
  canRelease,
  units,
  timeZone,
  nowMs,
  caution,
  initialView,
}: Props) {
  const [releases, setReleases] = useState(initialReleases);
  const [status, setStatus] = useState(initialStatus);
  const released = releases.map((r) => r.kind);
  const open = releaseKinds.filter((k) => !released.includes(k));
  const [kind, setKind] = useState<ReleaseKind>(open[0] ?? "strip");
  const [note, setNote] = useState("");
  const [overrideReason, setOverrideReason] = useState("");
  const [overrideError, setOverrideError] = useState<string | undefined>();
  const [serverSaysOverride, setServerSaysOverride] = useState<string | null>(null);
  const [step, setStep] = useState<"form" | "confirm">("form");
  const [busy, setBusy] = useState<"checking" | "sending" | null>(null);
  const [snapshot, setSnapshot] = useState<{
    view: PourStrength;
    decision: ReleaseDecision;
  } | null>(null);
  const [notice, setNotice] = useState<{ tone: "ok" | "error"; text: string } | null>(null);
  const confirmHeading = useRef<HTMLHeadingElement>(null);
  const noticeRef = useRef<HTMLDivElement>(null);

  useEffect(() => {
    if (step === "confirm") confirmHeading.current?.focus();
  }, [step]);
  useEffect(() => {
    if (notice) noticeRef.current?.focus();
  }, [notice]);

  const preview = decideFromView(initialView, kind, status, released, overrideReason);
  const needsOverride =
    serverSaysOverride !== null ||
    preview.outcome === "needs-override" ||
    (preview.outcome === "allowed" && preview.overridden.length > 0);
  const view = snapshot?.view ?? initialView;
  const governing = view.sensors.find((s) => s.sensor === view.governing_sensor) ?? null;

  async function review() {
    setNotice(null);
    setOverrideError(undefined);
    setBusy("checking");
    let fresh = initialView;
    try {
      const res = await fetch(`/api/v1/pours/${pourId}/strength`);
      if (res.ok) fresh = (await res.json()) as PourStrength;
    } catch {
      // Decide on the figures at hand; the server decides again on its own.
    }
    setBusy(null);
    const decision = decideFromView(fresh, kind, status, released, overrideReason);
    if (decision.outcome === "refused") {
      setNotice({ tone: "error", text: decision.reason.message });
      return;
    }
    if (decision.outcome === "needs-override") {
      setServerSaysOverride(decision.reasons.map((r) => r.message).join(" "));
      setOverrideError(
        "Give the reason for releasing anyway, or wait until the estimate supports it.",
      );
      return;
    }
    setSnapshot({ view: fresh, decision });
    setStep("confirm");
  }

  async function signOff() {
    setBusy("sending");
    let res: Response;
    try {
      res = await fetch(`/api/v1/pours/${pourId}/releases`, {
        method: "POST",
        headers: { "content-type": "application/json" },
        body: JSON.stringify({
          kind,
          note: note.trim() || null,
          override_reason: overrideReason.trim() || null,
        }),
      });
    } catch {
      setBusy(null);
      setNotice({
        tone: "error",
        text: "The server could not be reached. Nothing was recorded; try again.",
      });
      return;
    }
    setBusy(null);
    if (res.status === 201) {
      const made = (await res.json()) as ReleaseRecord & { pour_status: PourStatus };
      const { pour_status, ...record } = made;
      setReleases((list) => [...list, record]);
      setStatus(pour_status);
      setStep("form");
      setSnapshot(null);
      setNote("");
      setOverrideReason("");
      setServerSaysOverride(null);
      const nextOpen = releaseKinds.filter((k) => k !== made.kind && !released.includes(k));
      if (nextOpen[0]) setKind(nextOpen[0]);
      setNotice({
        tone: "ok",
        text: `${releaseKindLabels[made.kind]} release of ${pourCode} recorded, ${whenText(Date.parse(made.released_at), timeZone, Date.now())}. The pour is now “${statusLabels[pour_status]}”.`,
      });
      window.dispatchEvent(
        new CustomEvent<ReleaseRecordedDetail>(RELEASE_RECORDED_EVENT, {
          detail: {
            kind: made.kind,
            at: made.released_at,
            by: made.released_by.name,
            override: made.overridden.length > 0,
            pourStatus: pour_status,
          },
        }),
      );
      return;
    }
    let body: { type?: string; detail?: string; title?: string } = {};
    try {
      body = (await res.json()) as typeof body;
    } catch {
      // not JSON: fall back to the status below
    }
    const text = body.detail ?? body.title ?? `The server answered ${res.status}.`;
    setStep("form");
    if (body.type?.endsWith("/release-needs-override")) {
      setServerSaysOverride(text);
      setOverrideError(
        "Give the reason for releasing anyway, or wait until the estimate supports it.",
      );
      return;
    }
    setNotice({ tone: "error", text });
  }

  const decision = snapshot?.decision;
  return (
    <section aria-labelledby="releases" className="grid gap-4">
      <div className="flex flex-wrap items-center gap-3">
        <h2 id="releases" className="text-xl font-bold">
          Strip and ship releases
        </h2>
      </div>

      <div className="card border-l-[6px] border-l-warn p-4" role="note" aria-label="Caution">
        <p className="font-bold">
          <span aria-hidden="true">▲ </span>Caution
        </p>
        <p data-testid="caution">{caution}</p>
      </div>

      {notice && (
        <div
          ref={noticeRef}
          tabIndex={-1}
          role={notice.tone === "error" ? "alert" : "status"}
          className={`card p-4 font-semibold ${notice.tone === "error" ? "bg-alarm-bg text-alarm" : "bg-ok-bg text-ok"}`}
        >
          {notice.text}
        </div>
      )}

      {releases.length === 0 ? (
        <p className="card p-4 text-muted">No release has been signed off for this pour yet.</p>
      ) : (
        <ul className="grid gap-3" aria-label="Releases made">
          {releases.map((r) => (
            <ReleaseRecordCard key={r.id} r={r} units={units} timeZone={timeZone} nowMs={nowMs} />
          ))}
        </ul>
      )}

      {!canRelease ? (
        <p className="text-sm text-muted">Only QC and managers sign off releases.</p>
      ) : open.length === 0 ? (
        <p className="text-sm text-muted">Both releases are signed off.</p>
      ) : status === "shipped" || status === "void" ? (
        <p className="text-sm text-muted">
          This pour is {statusLabels[status].toLowerCase()}; it takes no release.
        </p>
      ) : step === "form" ? (
        <form
          className="card grid gap-4 p-4"
          aria-labelledby="sign-off"
          onSubmit={(e) => {
            e.preventDefault();
            void review();
          }}
        >
          <h3 id="sign-off" className="text-lg font-bold">
            Sign off a release
          </h3>
          <fieldset className="grid gap-2">
            <legend className="label mb-1">Release</legend>
            <div className="grid gap-2 sm:grid-cols-2">
              {releaseKinds.map((k) => {
                const done = released.includes(k);
                return (
                  <label
                    key={k}
                    className={`flex min-h-12 cursor-pointer items-center gap-3 rounded-lg border p-3 ${kind === k ? "border-accent bg-info-bg" : "border-line"} ${done ? "cursor-not-allowed opacity-60" : ""}`}
                  >
                    <input
                      type="radio"
                      name="kind"
                      value={k}
                      className="h-5 w-5"
                      checked={kind === k}
                      disabled={done}
                      onChange={() => {
                        setKind(k);
                        setOverrideReason("");
                        setServerSaysOverride(null);
                        setOverrideError(undefined);
                      }}
                    />
                    <span>
                      <span className="font-bold">{releaseKindLabels[k]}</span>
                      <span className="block text-sm text-muted">
                        {done
                          ? "already released"
                          : `needs ${strengthText(initialView[k].threshold_psi, units)}`}
                      </span>
                    </span>
                  </label>
                );
              })}
            </div>
          </fieldset>

          <p className="text-sm">
            Governing estimate now:{" "}
            <span className="figure font-bold">
              {initialView.calibrated
                ? strengthText(governing?.strength_psi ?? null, units)
                : "none (mix not calibrated)"}
            </span>
            {governing ? ` at ${governing.sensor}` : ""}
          </p>

          {preview.outcome !== "refused" &&
            preview.warnings.some((w) => w.code === "incomplete-record") && (
              <p className="rounded-md bg-warn-bg p-3 text-sm font-semibold text-warn">
                <span aria-hidden="true">▲ </span>
                {preview.warnings.find((w) => w.code === "incomplete-record")?.message}
              </p>
            )}

          {needsOverride && (
            <div
              className="grid gap-3 rounded-md border border-warn bg-warn-bg p-3"
              data-testid="override-needed"
            >
              <p className="font-semibold text-warn">
                <span aria-hidden="true">▲ </span>
                {serverSaysOverride ??
                  (preview.outcome === "needs-override"
                    ? preview.reasons.map((r) => r.message).join(" ")
                    : preview.outcome === "allowed"
                      ? preview.overridden.map((r) => r.message).join(" ")
                      : "")}{" "}
                It can be released only with a reason, which is recorded with it.
              </p>
              <Field
                id="override-reason"
                label="Override reason (required to release anyway)"
                error={overrideError}
                hint="For instance the cylinder breaks or the engineer's instruction it rests on."
              >
                <textarea
                  id="override-reason"
                  className="input min-h-24 py-2"
                  value={overrideReason}
                  aria-invalid={overrideError ? "true" : undefined}
                  aria-describedby={overrideError ? "override-reason-err" : undefined}
                  maxLength={2000}
                  onChange={(e) => {
                    setOverrideReason(e.target.value);
                    setOverrideError(undefined);
                  }}
                />
              </Field>
            </div>
          )}

          <Field
            id="release-note"
            label="Note (optional)"
            hint="Seen by everyone who reads the pour's record."
          >
            <textarea
              id="release-note"
              className="input min-h-20 py-2"
              value={note}
              maxLength={2000}
              onChange={(e) => setNote(e.target.value)}
            />
          </Field>
          <div>
            <button type="submit" className="btn btn-primary" disabled={busy !== null}>
              {busy === "checking" ? "Checking the latest figures…" : `Review the ${kind} release`}
            </button>
          </div>
        </form>
      ) : (
        <section
          aria-labelledby="confirm-release"
          className="card grid gap-3 border-2 border-accent p-4"
          data-testid="confirm-release"
        >
          <h3 id="confirm-release" ref={confirmHeading} tabIndex={-1} className="text-lg font-bold">
            Confirm the {kind} release of{" "}
            <span className="figure whitespace-nowrap">{pourCode}</span>
          </h3>
          <dl className="grid gap-1 text-sm sm:grid-cols-2 sm:gap-x-6">
            <div className="flex justify-between gap-2">
              <dt className="text-muted">Governing estimate</dt>
              <dd className="figure font-bold">
                {view.calibrated ? strengthText(governing?.strength_psi ?? null, units) : "none"}
                {governing ? ` at ${governing.sensor}` : ""}
              </dd>
            </div>
            <div className="flex justify-between gap-2">
              <dt className="text-muted">{releaseKindLabels[kind]} strength</dt>
              <dd className="figure font-bold">{strengthText(view[kind].threshold_psi, units)}</dd>
            </div>
            <div className="flex justify-between gap-2">
              <dt className="text-muted">Record</dt>
              <dd className="font-semibold">
                {view.complete_record ? "complete" : "incomplete (estimate errs low)"}
              </dd>
            </div>
            <div className="flex justify-between gap-2">
              <dt className="text-muted">Figures as of</dt>
              <dd>{whenText(Date.parse(view.as_of), timeZone, Date.parse(view.as_of))}</dd>
            </div>
          </dl>
          {decision?.outcome === "allowed" && decision.overridden.length > 0 && (
            <p className="rounded-md bg-warn-bg p-3 text-sm font-semibold text-warn">
              <span aria-hidden="true">▲ </span>Override:{" "}
              {decision.overridden.map((o) => o.message).join(" ")} Reason: “{overrideReason.trim()}
              ”
            </p>
          )}
          {decision?.outcome === "allowed" &&
            decision.warnings.some((w) => w.code === "incomplete-record") && (
              <p className="rounded-md bg-warn-bg p-3 text-sm font-semibold text-warn">
                <span aria-hidden="true">▲ </span>The temperature record is incomplete; the release
                will say so.
              </p>
            )}
          <div className="rounded-md border border-line bg-surface-2 p-3">
            <p className="font-bold">Before you sign</p>
            <p>{caution}</p>
          </div>
          <div className="flex flex-wrap gap-2">
            <button
              type="button"
              className="btn btn-primary"
              onClick={() => void signOff()}
              disabled={busy !== null}
            >
              {busy === "sending" ? "Recording…" : `Sign off the ${kind} release`}
            </button>
            <button
              type="button"
              className="btn btn-quiet"
              onClick={() => {
                setStep("form");
                setSnapshot(null);
              }}
              disabled={busy !== null}
            >
              Back
            </button>
          </div>
        </section>
      )}
    </section>
  );
}
