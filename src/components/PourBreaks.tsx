import { useState, type SyntheticEvent } from "react";
import { displayStrength, type UnitSystem } from "@/domain/units";
import { formatDateTime, readProblem } from "@/lib/format";
import { fromPlantInput, toPlantInput } from "@/lib/plantTime";
import { SubmitButton, TextField } from "./Field";
import FormCard from "./FormCard";
import { Banner, type Notice } from "./Notice";
import TableHead from "./TableHead";

/** A break as GET /api/v1/pours/{id}/breaks shows it. */
export interface BreakItem {
  id: number;
  specimen_id: string | null;
  broken_at: string;
  age_h: number | null;
  strength_psi: number;
  strength_mpa: number;
  estimate_psi: number | null;
  estimate_mpa: number | null;
  ratio: number | null;
  warning: string | null;
  lab: string | null;
  note: string | null;
  entered_by: string | null;
}

interface Props {
  pourId: number;
  code: string;
  mixName: string;
  initial: BreakItem[];
  cylinderIds: string[];
  units: UnitSystem;
  timeZone: string;
  nowMs: number;
  /** QC and managers enter breaks. */
  canAdd: boolean;
}

const pct = (r: number) => `${Math.round(r * 100)} %`;
const ageText = (h: number | null) =>
  h === null ? "—" : h < 48 ? `${h.toFixed(1)} h` : `${(h / 24).toFixed(1)} d`;

/**
 * A pour's cylinder breaks against the in-place estimate at the time of each break. A break
 * below 90 % of the estimate says the mix's curve over-estimates: QC is told to recalibrate.
 */
export default function PourBreaks({
  pourId,
  code,
  mixName,
  initial,
  cylinderIds,
  units,
  timeZone,
  nowMs,
  canAdd,
}: Props) {
  const [items, setItems] = useState(initial);
  const [adding, setAdding] = useState(false);
  const [notice, setNotice] = useState<Notice | null>(null);
  const [busy, setBusy] = useState(false);
  const [specimen, setSpecimen] = useState("");
  const [brokenAt, setBrokenAt] = useState(() => toPlantInput(nowMs, timeZone));
  const [strength, setStrength] = useState("");
  const [lab, setLab] = useState("");
  const [note, setNote] = useState("");
  const [errors, setErrors] = useState<Record<string, string>>({});
  const us = units === "us";
  const s = (mpa: number | null) => {
    if (mpa === null) return "—";
    const d = displayStrength(mpa, units);
    return `${d.value} ${d.unit}`;
  };
  const used = new Set(items.map((b) => b.specimen_id));
  const unbroken = cylinderIds.filter((c) => !used.has(c));
  const warned = items.filter((b) => b.warning).length;

  async function add(e: SyntheticEvent) {
    e.preventDefault();
    const errs: Record<string, string> = {};
    const atMs = fromPlantInput(brokenAt, timeZone);
    const value = Number(strength);
    if (specimen.trim() === "") errs.specimen_id = "Enter the cylinder's id";
    if (atMs === null) errs.broken_at = "Enter when it was broken";
    if (strength.trim() === "" || !Number.isFinite(value) || value <= 0)
      errs.strength = `Enter the strength in ${us ? "psi" : "MPa"}`;
    setErrors(errs);
    if (Object.keys(errs).length > 0) return;
    setBusy(true);
    setNotice(null);
    const res = await fetch(`/api/v1/pours/${pourId}/breaks`, {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({
        specimen_id: specimen.trim(),
        broken_at: new Date(atMs!).toISOString(),
        ...(us ? { strength_psi: value } : { strength_mpa: value }),
        ...(lab.trim() && { lab: lab.trim() }),
        ...(note.trim() && { note: note.trim() }),
      }),
    });
    setBusy(false);
    if (!res.ok) {
      const p = await readProblem(res);
      const fe: Record<string, string> = {};
      for (const [k, v] of Object.entries(p.fields))
        fe[k === "strength_psi" || k === "strength_mpa" ? "strength" : k] = v;
      setErrors(fe);
      setNotice({ tone: "error", text: p.message });
      return;
    }
    const b = (await res.json()) as BreakItem & { estimate_note?: string };
    setItems((list) =>
      [...list, b].sort((x, y) => Date.parse(x.broken_at) - Date.parse(y.broken_at)),
    );
    setNotice({
      tone: "ok",
      text: `${b.specimen_id} recorded: ${s(b.strength_mpa)}${b.ratio !== null ? `, ${pct(b.ratio)} of the estimate of ${s(b.estimate_mpa)} at that time` : ""}.${b.estimate_note ? ` ${b.estimate_note}` : ""}`,
    });
    setSpecimen("");
    setStrength("");
    setNote("");
    setAdding(false);
  }

  const check = (b: BreakItem) =>
    b.warning ? (
      <span className="inline-flex items-center gap-1 rounded-full bg-alarm-bg px-2 py-0.5 text-xs font-bold text-alarm">
        <span aria-hidden="true">■</span>Below 90 %: recalibrate
      </span>
    ) : b.ratio === null ? (
      <span className="inline-flex items-center gap-1 rounded-full bg-surface-2 px-2 py-0.5 text-xs font-bold text-muted">
        <span aria-hidden="true">○</span>No estimate
      </span>
    ) : (
      <span className="inline-flex items-center gap-1 rounded-full bg-ok-bg px-2 py-0.5 text-xs font-bold text-ok">
        <span aria-hidden="true">●</span>Agrees
      </span>
    );

  return (
    <div className="grid gap-3">
      {notice && <Banner {...notice} look="card" />}
      {warned > 0 && (
        <div
          className="card border-alarm bg-alarm-bg p-3 text-sm text-alarm"
          data-testid="recalibrate-warning"
        >
          <p className="font-bold">
            <span aria-hidden="true">■ </span>
            {warned} break{warned === 1 ? "" : "s"} below 90 % of the estimate: recalibrate{" "}
            {mixName}.
          </p>
          <p className="mt-1 text-ink">
            The curve may over-estimate this mix in place. Until QC recalibrates it, treat strip and
            ship estimates for {mixName} with caution and lean on cylinder breaks.
          </p>
        </div>
      )}
      {items.length > 0 && (
        <p className="text-sm text-muted">
          {items.length} break{items.length === 1 ? "" : "s"}, each against the in-place estimate at
          the time it was broken.
        </p>
      )}
      {items.length === 0 ? (
        <p className="text-muted">No cylinder breaks entered for {code} yet.</p>
      ) : (
        <div className="overflow-x-auto">
          <table className="w-full min-w-[40rem] text-left text-sm">
            <caption className="sr-only">Cylinder breaks of {code} against the estimate</caption>
            <TableHead
              cell="p-2"
              columns={[
                "Cylinder",
                "Broken",
                { label: "Age", className: "text-right" },
                { label: "Strength", className: "text-right" },
                { label: "Estimate then", className: "text-right" },
                { label: "Ratio", className: "text-right" },
                "Check",
              ]}
            />
            <tbody>
              {items.map((b) => (
                <tr key={b.id} className="border-b border-line last:border-0">
                  <th scope="row" className="figure p-2 font-semibold">
                    {b.specimen_id ?? "—"}
                    {b.lab && (
                      <span className="block font-sans text-xs font-normal text-muted">
                        {b.lab}
                      </span>
                    )}
                  </th>
                  <td className="p-2 whitespace-nowrap">
                    {formatDateTime(Date.parse(b.broken_at), timeZone, "short")}
                  </td>
                  <td className="figure p-2 text-right">{ageText(b.age_h)}</td>
                  <td className="figure p-2 text-right font-semibold">{s(b.strength_mpa)}</td>
                  <td className="figure p-2 text-right">{s(b.estimate_mpa)}</td>
                  <td className="figure p-2 text-right">{b.ratio === null ? "—" : pct(b.ratio)}</td>
                  <td className="p-2">{check(b)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}

      {canAdd && (
        <FormCard
          open={adding}
          openLabel="Enter a break"
          onOpen={() => setAdding(true)}
          onCancel={() => setAdding(false)}
          onSubmit={add}
          className="sm:grid-cols-2"
          span="sm:col-span-2"
          submit={
            <SubmitButton busy={busy} busyLabel="Comparing…">
              Record break
            </SubmitButton>
          }
        >
          <TextField
            id="br-specimen"
            label="Cylinder id"
            error={errors.specimen_id}
            className="input figure"
            list="br-cylinders"
            autoComplete="off"
            value={specimen}
            onChange={(e) => setSpecimen(e.target.value)}
          >
            <datalist id="br-cylinders">
              {unbroken.map((c) => (
                <option key={c} value={c} />
              ))}
            </datalist>
          </TextField>
          <TextField
            id="br-at"
            label="Broken at"
            error={errors.broken_at}
            hint={`Plant time (${timeZone})`}
            type="datetime-local"
            className="input min-w-0"
            value={brokenAt}
            onChange={(e) => setBrokenAt(e.target.value)}
          />
          <TextField
            id="br-strength"
            label={`Strength (${us ? "psi" : "MPa"})`}
            error={errors.strength}
            className="input figure"
            inputMode="decimal"
            value={strength}
            onChange={(e) => setStrength(e.target.value)}
          />
          <TextField
            id="br-lab"
            label="Lab (optional)"
            value={lab}
            onChange={(e) => setLab(e.target.value)}
            maxLength={80}
          />
          <div className="sm:col-span-2">
            <TextField
              id="br-note"
              label="Note (optional)"
              value={note}
              onChange={(e) => setNote(e.target.value)}
              maxLength={1000}
            />
          </div>
          <p className="hint sm:col-span-2">
            The break is compared with the estimate at the moment it was broken, from the coldest
            sensor&apos;s readings up to then.
          </p>
        </FormCard>
      )}
    </div>
  );
}
