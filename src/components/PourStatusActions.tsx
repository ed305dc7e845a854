import { useState } from "react";
import { statusLabels, type PourStatus } from "@/domain/pourLifecycle";
import { readProblem } from "@/lib/format";

interface Props {
  pourId: number;
  code: string;
  status: PourStatus;
  nextStatuses: PourStatus[];
  releases: { strip: boolean; ship: boolean };
}

const actionLabels: Partial<Record<PourStatus, string>> = {
  stripped: "Record stripped",
  ready_to_ship: "Record ready to ship",
  shipped: "Record shipped",
};

/**
 * What the floor may record about a pour's status: the forward steps its releases allow
 * (shipped once QC has signed a ship release), and voiding it with a reason.
 */
export default function PourStatusActions({ pourId, code, status, nextStatuses, releases }: Props) {
  const [busy, setBusy] = useState<PourStatus | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [voiding, setVoiding] = useState(false);
  const [reason, setReason] = useState("");
  const forward = nextStatuses.filter((s) => s !== "void");

  async function move(to: PourStatus, why?: string) {
    setBusy(to);
    setError(null);
    const res = await fetch(`/api/v1/pours/${pourId}`, {
      method: "PATCH",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({ status: to, ...(why && { reason: why }) }),
    });
    if (res.ok) {
      window.location.reload();
      return;
    }
    setBusy(null);
    setError((await readProblem(res)).message);
  }

  return (
    <div className="grid gap-3">
      {error && (
        <p role="alert" className="card bg-alarm-bg p-3 font-semibold text-alarm">
          {error}
        </p>
      )}
      <div className="flex flex-wrap gap-2">
        {forward.map((to) => (
          <button
            key={to}
            type="button"
            className="btn btn-primary"
            disabled={busy !== null}
            onClick={() => {
              if (
                window.confirm(
                  `${actionLabels[to]} for ${code}? This is recorded and cannot be undone.`,
                )
              )
                void move(to);
            }}
          >
            {busy === to ? "Recording…" : actionLabels[to]}
          </button>
        ))}
        {!voiding && (
          <button
            type="button"
            className="btn btn-danger"
            disabled={busy !== null}
            aria-expanded="false"
            aria-controls="void-form"
            onClick={() => setVoiding(true)}
          >
            Void this pour…
          </button>
        )}
      </div>
      {!releases.ship && status !== "shipped" && (
        <p className="hint">
          Shipped is recorded after QC signs a ship release on the Strength and release page.
          {!releases.strip && status === "curing" && " Stripped follows a strip release."}
        </p>
      )}
      {voiding && (
        <form
          id="void-form"
          className="card grid gap-3 border-alarm p-3"
          onSubmit={(e) => {
            e.preventDefault();
            if (reason.trim() === "") {
              setError("Say why the pour is void.");
              return;
            }
            void move("void", reason.trim());
          }}
        >
          <div className="field">
            <label htmlFor="void-reason">Why is {code} void?</label>
            <textarea
              id="void-reason"
              className="input min-h-20 py-2"
              rows={3}
              maxLength={500}
              value={reason}
              onChange={(e) => setReason(e.target.value)}
              aria-describedby="void-hint"
            />
            <p id="void-hint" className="hint">
              A void pour stays on record with its reason; its sensors are freed now.
            </p>
          </div>
          <div className="flex flex-wrap gap-2">
            <button type="submit" className="btn btn-danger" disabled={busy !== null}>
              {busy === "void" ? "Voiding…" : `Void ${code}`}
            </button>
            <button type="button" className="btn btn-quiet" onClick={() => setVoiding(false)}>
              Keep it
            </button>
          </div>
        </form>
      )}
      <p className="sr-only" aria-live="polite">
        {busy ? `Recording ${statusLabels[busy]}` : ""}
      </p>
    </div>
  );
}
