import { zodResolver } from "@hookform/resolvers/zod";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { z } from "zod";
import { roleLabels, roles, type Role } from "@/lib/access";
import { formatDateTime, readProblem } from "@/lib/format";
import { emailField, nameField } from "@/lib/schemas/users";
import { SelectField, SubmitButton, TextField } from "./Field";
import { NoticeCard, type Notice } from "./Notice";
import TableHead from "./TableHead";

export interface TeamUser {
  id: number;
  email: string;
  name: string;
  role: Role;
  active: boolean;
  phone: string | null;
  last_sign_in_at: string | null;
}

interface Props {
  initialUsers: TeamUser[];
  meId: number;
  timeZone: string;
}

const addForm = z.object({
  name: nameField,
  email: emailField,
  role: z.enum(roles),
  phone: z.string().trim().max(32),
});
type AddForm = z.input<typeof addForm>;

async function api(path: string, method: string, body?: unknown) {
  const res = await fetch(path, {
    method,
    headers: body === undefined ? {} : { "content-type": "application/json" },
    body: body === undefined ? null : JSON.stringify(body),
  });
  return res;
}

/** The manager's team: add people, set roles, deactivate, reset passwords. */
export default function TeamManager({ initialUsers, meId, timeZone }: Props) {
  const [users, setUsers] = useState(initialUsers);
  const [notice, setNotice] = useState<(Notice & { secret?: string }) | null>(null);
  const [busy, setBusy] = useState<number | null>(null);
  const form = useForm<AddForm>({
    resolver: zodResolver(addForm),
    defaultValues: { name: "", email: "", role: "operator", phone: "" },
  });
  const { errors, isSubmitting } = form.formState;

  async function add(values: AddForm) {
    const res = await api("/api/v1/users", "POST", { ...values, phone: values.phone || null });
    if (!res.ok) {
      const p = await readProblem(res);
      for (const [field, error] of Object.entries(p.fields)) {
        if (field in values) form.setError(field as keyof AddForm, { message: error });
      }
      setNotice({ tone: "error", text: p.message });
      return;
    }
    const created = (await res.json()) as TeamUser & { temporary_password: string };
    setUsers((u) => [...u, created].sort((a, b) => a.name.localeCompare(b.name)));
    form.reset({ name: "", email: "", role: "operator", phone: "" });
    setNotice({
      tone: "ok",
      text: `${created.name} can now sign in with this one-time password. They will choose their own at first sign-in.`,
      secret: created.temporary_password,
    });
  }

  async function patch(
    u: TeamUser,
    change: Partial<Pick<TeamUser, "role" | "active">>,
    what: string,
  ) {
    setBusy(u.id);
    const res = await api(`/api/v1/users/${u.id}`, "PATCH", change);
    setBusy(null);
    if (!res.ok) {
      setNotice({ tone: "error", text: (await readProblem(res)).message });
      return;
    }
    const updated = (await res.json()) as TeamUser;
    setUsers((list) => list.map((x) => (x.id === u.id ? updated : x)));
    setNotice({ tone: "ok", text: `${u.name}: ${what}.` });
  }

  async function reset(u: TeamUser) {
    if (
      !window.confirm(
        `Reset the password of ${u.name}? Their sessions end and they must choose a new password.`,
      )
    )
      return;
    setBusy(u.id);
    const res = await api(`/api/v1/users/${u.id}/password-reset`, "POST", {});
    setBusy(null);
    if (!res.ok) {
      setNotice({ tone: "error", text: (await readProblem(res)).message });
      return;
    }
    const body = (await res.json()) as { temporary_password: string };
    setNotice({
      tone: "ok",
      text: `Give ${u.name} this one-time password. It is shown only now.`,
      secret: body.temporary_password,
    });
  }

  return (
    <div className="grid gap-6">
      {notice && (
        <NoticeCard tone={notice.tone}>
          <p className="font-semibold">{notice.text}</p>
          {notice.secret && (
            <p className="mt-2">
              <code
                className="figure rounded bg-surface px-2 py-1 text-lg"
                data-testid="one-time-password"
              >
                {notice.secret}
              </code>
            </p>
          )}
        </NoticeCard>
      )}

      <section aria-labelledby="people" className="card overflow-x-auto">
        <h2 id="people" className="p-4 pb-0 text-lg font-bold">
          People ({users.length})
        </h2>
        <table className="mt-2 w-full min-w-[44rem] text-left text-sm">
          <TableHead columns={["Name", "Role", "Phone", "Last sign-in", "Actions"]} />
          <tbody>
            {users.map((u) => (
              <tr
                key={u.id}
                className={`border-b border-line last:border-0 ${u.active ? "" : "text-muted"}`}
              >
                <th scope="row" className="p-3 font-semibold">
                  {u.name}
                  {u.id === meId && (
                    <span className="ml-1 text-xs font-normal text-muted">(you)</span>
                  )}
                  <span className="block text-xs font-normal text-muted">{u.email}</span>
                  {!u.active && <span className="text-xs font-bold">Deactivated</span>}
                </th>
                <td className="p-3">
                  <label className="sr-only" htmlFor={`role-${u.id}`}>
                    Role of {u.name}
                  </label>
                  <select
                    id={`role-${u.id}`}
                    className="input min-w-36"
                    value={u.role}
                    disabled={busy === u.id}
                    onChange={(e) =>
                      void patch(
                        u,
                        { role: e.target.value as Role },
                        `role set to ${roleLabels[e.target.value as Role]}`,
                      )
                    }
                  >
                    {roles.map((r) => (
                      <option key={r} value={r}>
                        {roleLabels[r]}
                      </option>
                    ))}
                  </select>
                </td>
                <td className="figure p-3">{u.phone ?? "—"}</td>
                <td className="p-3">
                  {u.last_sign_in_at
                    ? formatDateTime(Date.parse(u.last_sign_in_at), timeZone, "short")
                    : "never"}
                </td>
                <td className="p-3">
                  <div className="flex flex-wrap gap-2">
                    <button
                      type="button"
                      className="btn btn-quiet text-sm"
                      disabled={busy === u.id}
                      onClick={() => void reset(u)}
                    >
                      Reset password<span className="sr-only"> of {u.name}</span>
                    </button>
                    {u.id !== meId && (
                      <button
                        type="button"
                        className={`btn text-sm ${u.active ? "btn-danger" : "btn-quiet"}`}
                        disabled={busy === u.id}
                        onClick={() =>
                          void patch(
                            u,
                            { active: !u.active },
                            u.active ? "deactivated; their sessions have ended" : "reactivated",
                          )
                        }
                      >
                        {u.active ? "Deactivate" : "Reactivate"}
                        <span className="sr-only"> {u.name}</span>
                      </button>
                    )}
                  </div>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>

      <section aria-labelledby="add" className="card p-4">
        <h2 id="add" className="text-lg font-bold">
          Add a person
        </h2>
        <p className="hint">
          They get a one-time password to give them in person; they choose their own at first
          sign-in.
        </p>
        <form
          className="mt-3 grid gap-4 sm:grid-cols-2"
          onSubmit={form.handleSubmit(add)}
          noValidate
        >
          <TextField
            id="add-name"
            label="Name"
            error={errors.name?.message}
            autoComplete="off"
            {...form.register("name")}
          />
          <TextField
            id="add-email"
            label="E-mail"
            error={errors.email?.message}
            type="email"
            autoComplete="off"
            {...form.register("email")}
          />
          <SelectField
            id="add-role"
            label="Role"
            error={errors.role?.message}
            options={roles.map((r) => [r, roleLabels[r]])}
            {...form.register("role")}
          />
          <TextField
            id="add-phone"
            label="Mobile phone for alert texts (optional)"
            error={errors.phone?.message}
            type="tel"
            placeholder="+1 555 010 0123"
            {...form.register("phone")}
          />
          <div className="sm:col-span-2">
            <SubmitButton busy={isSubmitting} busyLabel="Adding…">
              Add person
            </SubmitButton>
          </div>
        </form>
      </section>
    </div>
  );
}
