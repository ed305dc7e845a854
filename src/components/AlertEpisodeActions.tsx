import { useEffect, useState } from "react";
import { AckForm } from "./AlertParts";

interface Props {
  episodeId: number;
  /** What is being acknowledged, for the button's accessible name. */
  subject: string;
  /** True when the reader may acknowledge and nobody has yet. */
  canAck: boolean;
  /** The episode cleared by itself before anyone acknowledged it. */
  cleared: boolean;
}

const changeWords: Record<string, string> = {
  opened: "opened",
  worsened: "worsened",
  acknowledged: "been acknowledged",
  cleared: "cleared",
};

/**
 * One episode's page, live: the acknowledge form while nobody has acknowledged it, and a
 * line that says when the episode changes on the server (with a button to show the latest).
 */
export default function AlertEpisodeActions({ episodeId, subject, canAck, cleared }: Props) {
  const [changed, setChanged] = useState<string | null>(null);

  useEffect(() => {
    const es = new EventSource("/api/v1/live");
    es.addEventListener("alert", (ev) => {
      const e = JSON.parse((ev as MessageEvent<string>).data) as { id: number; change: string };
      if (e.id === episodeId) setChanged(changeWords[e.change] ?? e.change);
    });
    return () => es.close();
  }, [episodeId]);

  return (
    <div>
      {changed && (
        <div role="status" className="card mb-3 flex flex-wrap items-center gap-3 bg-info-bg p-3">
          <p className="font-semibold">
            <span aria-hidden="true">◆ </span>This alert has just {changed}.
          </p>
          <button type="button" className="btn btn-quiet" onClick={() => window.location.reload()}>
            Show the latest
          </button>
        </div>
      )}
      {canAck && cleared && (
        <p className="hint">
          It cleared by itself before anyone acknowledged it. Acknowledge it to record what was
          done.
        </p>
      )}
      {canAck && (
        <AckForm
          episodeId={episodeId}
          subject={subject}
          onDone={() => window.location.reload()}
          onConflict={() => setChanged("been acknowledged by someone else")}
        />
      )}
    </div>
  );
}
