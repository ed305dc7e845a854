import { zodResolver } from "@hookform/resolvers/zod";
import { useRef, useState, type ReactNode, type RefObject } from "react";
import { useForm } from "react-hook-form";
import { z } from "zod";
import { roleLabels, roles, type Role } from "@/lib/access";
import { formatDateTime, readProblem } from "@/lib/format";
import { gatewayNameField, tokenNameField } from "@/lib/schemas/keys";
import Field, { SelectField, SubmitButton } from "./Field";
import { NoticeCard, type Notice } from "./Notice";
import TableHead from "./TableHead";

/** A gateway as GET /api/v1/gateways lists it. */
export interface GatewayItem {
  id: number;
  name: string;
  key_prefix: string;
  created_at: string;
  last_used_at: string | null;
  revoked_at: string | null;
}

/** An API token as GET /api/v1/tokens lists it. */
export interface TokenItem extends GatewayItem {
  role: Role;
}

interface Props {
  initialGateways: GatewayItem[];
  initialTokens: TokenItem[];
  timeZone: string;
  /** Where gateways reach Plinth's own broker, or null when Plinth reads an outside broker. */
  mqtt: { host: string; port: number } | null;
}

/** A key shown once, just after it was made. */
type Fresh =
  | { kind: "gateway"; name: string; key: string }
  | { kind: "token"; name: string; role: Role; key: string };

async function post(path: string, body: unknown) {
  return fetch(path, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify(body),
  });
}

function StateMark({ revokedAt, timeZone }: { revokedAt: string | null; timeZone: string }) {
  return revokedAt ? (
    <span className="inline-flex flex-col items-start gap-0.5">
      <span className="inline-flex items-center gap-1 rounded-full bg-surface-2 px-2 py-0.5 text-xs font-bold text-muted">
        <span aria-hidden="true">○</span>Revoked
      </span>
      <span className="text-xs text-muted">
        {formatDateTime(Date.parse(revokedAt), timeZone, "short")}
      </span>
    </span>
  ) : (
    <span className="inline-flex items-center gap-1 rounded-full bg-ok-bg px-2 py-0.5 text-xs font-bold text-ok">
      <span aria-hidden="true">●</span>In use
    </span>
  );
}

/** Copies text; where the browser offers no clipboard (plain http on a plant network), selects it instead. */
function CopyButton({ text, target }: { text: string; target: RefObject<HTMLElement | null> }) {
  const [done, setDone] = useState<"copied" | "selected" | null>(null);
  async function copy() {
    try {
      if (!navigator.clipboard) throw new Error("no clipboard");
      await navigator.clipboard.writeText(text);
      setDone("copied");
    } catch {
      const el = target.current;
      if (el) {
        const range = document.createRange();
        range.selectNodeContents(el);
        const sel = window.getSelection();
        sel?.removeAllRanges();
        sel?.addRange(range);
      }
      setDone("selected");
    }
  }
  return (
    <span className="inline-flex flex-wrap items-center gap-2">
      <button type="button" className="btn btn-primary" onClick={() => void copy()}>
        Copy key
      </button>
      <span role="status" className="text-sm font-semibold">
        {done === "copied"
          ? "Copied."
          : done === "selected"
            ? "Selected: press Ctrl+C (⌘C) to copy."
            : ""}
      </span>
    </span>
  );
}

function FreshKey({
  fresh,
  origin,
  mqtt,
  onDismiss,
}: {
  fresh: Fresh;
  origin: string;
  mqtt: Props["mqtt"];
  onDismiss: () => void;
}) {
  const keyRef = useRef<HTMLElement>(null);
  const code = "figure rounded bg-surface px-1.5 py-0.5 text-sm";
  return (
    <section
      aria-labelledby="fresh-h"
      className="card border-2 border-warn bg-warn-bg p-4"
      data-testid="fresh-key"
    >
      <h2 id="fresh-h" tabIndex={-1} className="text-lg font-bold">
        {fresh.kind === "gateway"
          ? `Gateway "${fresh.name}" added`
          : `API token "${fresh.name}" made (${roleLabels[fresh.role]})`}
      </h2>
      <p className="mt-1 font-semibold text-warn">
        <span aria-hidden="true">▲ </span>Copy the key now. It will not be shown again: Plinth keeps
        only a fingerprint of it. If it is lost, revoke it and make a new one.
      </p>
      <p className="mt-3 break-all">
        <code
          ref={keyRef}
          className="figure block rounded-md border border-line bg-surface px-3 py-2 text-base"
          data-testid="fresh-key-value"
        >
          {fresh.key}
        </code>
      </p>
      <div className="mt-3">
        <CopyButton text={fresh.key} target={keyRef} />
      </div>
      <div className="mt-4 grid gap-2 text-sm">
        <h3 className="font-bold">How to use it</h3>
        {fresh.kind === "gateway" ? (
          <>
            <p>
              Over HTTP: <code className={code}>POST {origin}/api/v1/readings</code> with the header{" "}
              <code className={`${code} break-all`} data-testid="http-usage">
                Authorization: Bearer {fresh.key}
              </code>
            </p>
            <p>
              Over MQTT: user name{" "}
              <code className={code} data-testid="mqtt-user">
                {fresh.name}
              </code>
              , password the key
              {mqtt ? (
                <>
                  , broker{" "}
                  <code className={code}>
                    mqtt://{mqtt.host}:{mqtt.port}
                  </code>
                </>
              ) : (
                " (Plinth reads the plant's own broker: set the gateway up there)"
              )}
              ; publish to <code className={code}>plinth/readings/&lt;sensor id&gt;</code>.
            </p>
          </>
        ) : (
          <p>
            Send it with every request:{" "}
            <code className={`${code} break-all`} data-testid="http-usage">
              Authorization: Bearer {fresh.key}
            </code>
            . The script may do what a {roleLabels[fresh.role].toLowerCase()} may do, and no more.
          </p>
        )}
      </div>
      <button type="button" className="btn btn-quiet mt-4" onClick={onDismiss}>
        I have copied the key
      </button>
    </section>
  );
}

const gatewayForm = z.object({ name: gatewayNameField });
type GatewayForm = z.input<typeof gatewayForm>;
const tokenForm = z.object({ name: tokenNameField, role: z.enum(roles) });
type TokenForm = z.input<typeof tokenForm>;

/** One list of keys (gateways or tokens): a table on desks, cards on phones. */
function KeyList<T extends GatewayItem>({
  items,
  caption,
  extraHead,
  extraCell,
  timeZone,
  busy,
  onRevoke,
  what,
}: {
  items: T[];
  caption: string;
  extraHead?: string;
  extraCell?: (t: T) => ReactNode;
  timeZone: string;
  busy: number | null;
  onRevoke: (t: T) => void;
  what: string;
}) {
  const when = (iso: string | null) =>
    iso ? formatDateTime(Date.parse(iso), timeZone, "short") : "never";
  const revoke = (t: T) =>
    t.revoked_at ? null : (
      <button
        type="button"
        className="btn btn-danger text-sm"
        disabled={busy === t.id}
        onClick={() => onRevoke(t)}
      >
        Revoke
        <span className="sr-only">
          {" "}
          {what} {t.name}
        </span>
      </button>
    );
  if (items.length === 0) return <p className="p-4 text-sm text-muted">None yet.</p>;
  return (
    <>
      <ul className="grid gap-2 p-3 md:hidden">
        {items.map((t) => (
          <li key={t.id} className="rounded-lg border border-line p-3">
            <div className="flex items-start justify-between gap-2">
              <span className="font-semibold break-all">{t.name}</span>
              <StateMark revokedAt={t.revoked_at} timeZone={timeZone} />
            </div>
            <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-sm">
              {extraHead && extraCell && (
                <>
                  <dt className="text-muted">{extraHead}</dt>
                  <dd>{extraCell(t)}</dd>
                </>
              )}
              <dt className="text-muted">Key</dt>
              <dd className="figure">{t.key_prefix}…</dd>
              <dt className="text-muted">Created</dt>
              <dd>{when(t.created_at)}</dd>
              <dt className="text-muted">Last used</dt>
              <dd>{when(t.last_used_at)}</dd>
            </dl>
            {!t.revoked_at && <div className="mt-2">{revoke(t)}</div>}
          </li>
        ))}
      </ul>
      <table className="hidden w-full text-left text-sm md:table">
        <caption className="sr-only">{caption}</caption>
        <TableHead
          cell="px-4 py-3"
          columns={[
            "Name",
            extraHead ?? false,
            "Key",
            "Created",
            "Last used",
            "State",
            { label: "Actions", srOnly: true },
          ]}
        />
        <tbody>
          {items.map((t) => (
            <tr
              key={t.id}
              className={`border-b border-line last:border-0 ${t.revoked_at ? "text-muted" : ""}`}
            >
              <th scope="row" className="px-4 py-3 font-semibold break-all">
                {t.name}
              </th>
              {extraHead && extraCell && <td className="px-4 py-3">{extraCell(t)}</td>}
              <td className="figure p-3">{t.key_prefix}…</td>
              <td className="px-4 py-3">{when(t.created_at)}</td>
              <td className="px-4 py-3">{when(t.last_used_at)}</td>
              <td className="px-4 py-3">
                <StateMark revokedAt={t.revoked_at} timeZone={timeZone} />
              </td>
              <td className="px-4 py-3 text-right">{revoke(t)}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </>
  );
}

/** Gateways that send readings, and API tokens for the plant's scripts: add, list, revoke. */
export default function GatewayManager({ initialGateways, initialTokens, timeZone, mqtt }: Props) {
  const [gateways, setGateways] = useState(initialGateways);
  const [tokens, setTokens] = useState(initialTokens);
  const [fresh, setFresh] = useState<Fresh | null>(null);
  const [notice, setNotice] = useState<Notice | null>(null);
  const [busy, setBusy] = useState<number | null>(null);
  const origin = typeof window === "undefined" ? "" : window.location.origin;

  const gForm = useForm<GatewayForm>({
    resolver: zodResolver(gatewayForm),
    defaultValues: { name: "" },
  });
  const tForm = useForm<TokenForm>({
    resolver: zodResolver(tokenForm),
    defaultValues: { name: "", role: "viewer" },
  });
  const ge = gForm.formState.errors;
  const te = tForm.formState.errors;

  const reveal = (f: Fresh) => {
    setNotice(null);
    setFresh(f);
    // Bring the key into view and read its heading out: it is shown only now.
    requestAnimationFrame(() => {
      const h = document.getElementById("fresh-h");
      h?.focus({ preventScroll: true });
      h?.scrollIntoView({ block: "start" });
    });
  };

  async function addGateway(values: GatewayForm) {
    const res = await post("/api/v1/gateways", { name: values.name.trim() });
    if (!res.ok) {
      const p = await readProblem(res);
      gForm.setError("name", { message: p.fields.name ?? p.message });
      return;
    }
    const made = (await res.json()) as { id: number; name: string; key: string };
    const list = await fetch("/api/v1/gateways");
    if (list.ok) setGateways(((await list.json()) as { gateways: GatewayItem[] }).gateways);
    gForm.reset({ name: "" });
    reveal({ kind: "gateway", name: made.name, key: made.key });
  }

  async function addToken(values: TokenForm) {
    const res = await post("/api/v1/tokens", { name: values.name.trim(), role: values.role });
    if (!res.ok) {
      const p = await readProblem(res);
      tForm.setError("name", { message: p.fields.name ?? p.message });
      return;
    }
    const made = (await res.json()) as { id: number; name: string; role: Role; key: string };
    const list = await fetch("/api/v1/tokens");
    if (list.ok) setTokens(((await list.json()) as { tokens: TokenItem[] }).tokens);
    tForm.reset({ name: "", role: "viewer" });
    reveal({ kind: "token", name: made.name, role: made.role, key: made.key });
  }

  async function revoke<T extends GatewayItem>(
    t: T,
    path: string,
    warning: string,
    apply: (updated: T) => void,
  ) {
    if (!window.confirm(warning)) return;
    setBusy(t.id);
    const res = await post(path, {});
    setBusy(null);
    if (!res.ok) {
      setNotice({ tone: "error", text: (await readProblem(res)).message });
      return;
    }
    apply((await res.json()) as T);
    setNotice({ tone: "ok", text: `"${t.name}" is revoked; its key no longer works.` });
  }

  return (
    <div className="grid gap-6">
      {fresh && (
        <FreshKey fresh={fresh} origin={origin} mqtt={mqtt} onDismiss={() => setFresh(null)} />
      )}
      {notice && (
        <NoticeCard tone={notice.tone}>
          <p className="font-semibold">{notice.text}</p>
        </NoticeCard>
      )}

      <section aria-labelledby="gw-h" className="card">
        <div className="p-4 pb-0">
          <h2 id="gw-h" className="text-lg font-bold">
            Gateways ({gateways.filter((g) => !g.revoked_at).length} in use)
          </h2>
          <p className="hint">
            A gateway relays its sensors' readings to Plinth, over HTTP or MQTT. Its key may send
            readings and nothing else. A sensor it reports for the first time appears on the Sensors
            page to be named and placed.
          </p>
        </div>
        <KeyList
          items={gateways}
          caption="Gateways"
          timeZone={timeZone}
          busy={busy}
          what="gateway"
          onRevoke={(g) =>
            void revoke(
              g,
              `/api/v1/gateways/${g.id}/revoke`,
              `Revoke the gateway "${g.name}"? Its key stops working at once and readings it sends are refused. This cannot be undone: to bring it back, add it again under a new name.`,
              (u) => setGateways((list) => list.map((x) => (x.id === u.id ? u : x))),
            )
          }
        />
        <form
          className="border-t border-line p-4"
          onSubmit={gForm.handleSubmit(addGateway)}
          noValidate
        >
          <Field
            id="gw-name"
            label="New gateway's name"
            hint="Letters, digits, dots, underscores and dashes; it is also the gateway's MQTT user name."
            hintId="gw-name-hint"
            error={ge.name?.message}
          >
            <div className="flex flex-wrap gap-3">
              <input
                id="gw-name"
                className="input min-w-0 flex-1 basis-56"
                autoComplete="off"
                spellCheck={false}
                placeholder="yard-north"
                aria-invalid={ge.name ? true : undefined}
                aria-describedby={`gw-name-hint${ge.name ? " gw-name-err" : ""}`}
                {...gForm.register("name")}
              />
              <SubmitButton busy={gForm.formState.isSubmitting} busyLabel="Adding…">
                Add gateway
              </SubmitButton>
            </div>
          </Field>
        </form>
      </section>

      <section aria-labelledby="tok-h" className="card">
        <div className="p-4 pb-0">
          <h2 id="tok-h" className="text-lg font-bold">
            API tokens for scripts
          </h2>
          <p className="hint">
            For the plant's other systems (ERP, lab software, reports): a script sends the token as
            a bearer key and may do what its role may. Give each script its own token and the least
            role it needs.
          </p>
        </div>
        <KeyList
          items={tokens}
          caption="API tokens"
          extraHead="Role"
          extraCell={(t) => roleLabels[t.role]}
          timeZone={timeZone}
          busy={busy}
          what="token"
          onRevoke={(t) =>
            void revoke(
              t,
              `/api/v1/tokens/${t.id}/revoke`,
              `Revoke the token "${t.name}"? Scripts using it are refused from their next request. This cannot be undone.`,
              (u) => setTokens((list) => list.map((x) => (x.id === u.id ? u : x))),
            )
          }
        />
        <form
          className="border-t border-line p-4"
          onSubmit={tForm.handleSubmit(addToken)}
          noValidate
        >
          <div className="grid gap-3 sm:grid-cols-[1fr_12rem_auto] sm:items-end">
            {/* The error stands under the whole row (it may be the role's), so it is not the field's. */}
            <Field id="tok-name" label="New token's name">
              <input
                id="tok-name"
                className="input"
                autoComplete="off"
                placeholder="ERP nightly export"
                aria-invalid={te.name ? true : undefined}
                aria-describedby={`tok-name-hint${te.name ? " tok-name-err" : ""}`}
                {...tForm.register("name")}
              />
            </Field>
            <SelectField
              id="tok-role"
              label="Acts as"
              options={roles.map((r) => [r, roleLabels[r]])}
              {...tForm.register("role")}
            />
            <SubmitButton busy={tForm.formState.isSubmitting} busyLabel="Making…">
              Make token
            </SubmitButton>
          </div>
          <p id="tok-name-hint" className="hint mt-2">
            Name it for what uses it. The token may do what its role may, and no more.
          </p>
          {(te.name || te.role) && (
            <p id="tok-name-err" className="error-text mt-1">
              {te.name?.message ?? te.role?.message}
            </p>
          )}
        </form>
      </section>
    </div>
  );
}
