import { zodResolver } from "@hookform/resolvers/zod";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { z } from "zod";
import { readProblem } from "@/lib/format";
import { emailField, nameField, newPasswordField, phoneField } from "@/lib/schemas/users";
import Field from "./Field";

interface Props {
  me: {
    name: string;
    email: string;
    phone: string | null;
    units: "us" | "si";
    theme: "system" | "light" | "dark";
    notify: { sms: boolean; email: boolean; digest: boolean };
  };
  mustChangePassword: boolean;
}

const profileForm = z.object({
  name: nameField,
  email: emailField,
  phone: z.string().max(32, { message: "Use at most 32 characters" }).pipe(phoneField),
  units: z.enum(["us", "si"]),
  theme: z.enum(["system", "light", "dark"]),
  notify_sms: z.boolean(),
  notify_email: z.boolean(),
  notify_digest: z.boolean(),
});
type ProfileForm = z.input<typeof profileForm>;
type ProfileValues = z.output<typeof profileForm>;

const passwordForm = z
  .object({
    current_password: z.string().min(1, { message: "Enter your current password" }),
    new_password: newPasswordField,
    confirm: z.string(),
  })
  .refine((v) => v.new_password === v.confirm, {
    path: ["confirm"],
    message: "The two new passwords differ",
  });
type PasswordForm = z.input<typeof passwordForm>;

function Banner({ tone, text }: { tone: "ok" | "error"; text: string }) {
  return (
    <p
      role={tone === "error" ? "alert" : "status"}
      className={`rounded-md px-3 py-2 text-sm font-semibold ${tone === "error" ? "bg-alarm-bg text-alarm" : "bg-ok-bg text-ok"}`}
    >
      {text}
    </p>
  );
}

/** One's own account: profile, units, theme, alert channels, and password. */
export default function AccountForms({ me, mustChangePassword }: Props) {
  const [profileMsg, setProfileMsg] = useState<{ tone: "ok" | "error"; text: string } | null>(null);
  const [passwordMsg, setPasswordMsg] = useState<{ tone: "ok" | "error"; text: string } | null>(
    null,
  );
  const profile = useForm<ProfileForm, unknown, ProfileValues>({
    resolver: zodResolver(profileForm),
    defaultValues: {
      name: me.name,
      email: me.email,
      phone: me.phone ?? "",
      units: me.units,
      theme: me.theme,
      notify_sms: me.notify.sms,
      notify_email: me.notify.email,
      notify_digest: me.notify.digest,
    },
  });
  const password = useForm<PasswordForm>({
    resolver: zodResolver(passwordForm),
    defaultValues: { current_password: "", new_password: "", confirm: "" },
  });
  const pe = profile.formState.errors;
  const we = password.formState.errors;

  async function saveProfile(values: ProfileValues) {
    // The digest follows the person's role until they choose it themselves.
    const { notify_digest, ...rest } = values;
    const digestChosen = profile.formState.dirtyFields.notify_digest === true;
    const res = await fetch("/api/v1/me", {
      method: "PATCH",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({ ...rest, ...(digestChosen && { notify_digest }) }),
    });
    if (!res.ok) {
      const p = await readProblem(res);
      for (const [f, e] of Object.entries(p.fields))
        if (f in values) profile.setError(f as keyof ProfileForm, { message: e });
      setProfileMsg({ tone: "error", text: p.message });
      return;
    }
    const themeChanged = values.theme !== me.theme || values.units !== me.units;
    profile.reset({ ...values, phone: values.phone ?? "" });
    setProfileMsg({ tone: "ok", text: "Saved." });
    if (themeChanged) window.location.reload();
  }

  async function changePassword(values: PasswordForm) {
    const res = await fetch("/api/v1/me/password", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({
        current_password: values.current_password,
        new_password: values.new_password,
      }),
    });
    if (!res.ok) {
      const p = await readProblem(res);
      for (const [f, e] of Object.entries(p.fields))
        if (f in values) password.setError(f as keyof PasswordForm, { message: e });
      setPasswordMsg({ tone: "error", text: p.message });
      return;
    }
    password.reset();
    setPasswordMsg({
      tone: "ok",
      text: "Password changed. Your other sessions have been signed out.",
    });
    if (mustChangePassword) window.location.assign("/");
  }

  const invalid = (e: unknown) => (e ? true : undefined);
  const [phoneNow, smsOn, emailOn] = profile.watch(["phone", "notify_sms", "notify_email"]);
  const channelWarning =
    !smsOn && !emailOn
      ? "With texts and e-mails both off, alerts will not reach you, even when you are on call."
      : smsOn && !phoneNow.trim()
        ? emailOn
          ? "Texts need a phone number: until you add one, alerts reach you by e-mail."
          : "Texts need a phone number, and e-mails are off: alerts will not reach you."
        : null;
  return (
    <div className="grid gap-6 lg:grid-cols-2">
      <section
        aria-labelledby="pw"
        className={`card p-4 sm:p-5 ${mustChangePassword ? "lg:order-first" : "lg:order-last"}`}
      >
        <h2 id="pw" className="text-lg font-bold">
          Password
        </h2>
        <form
          className="mt-3 grid gap-4"
          onSubmit={password.handleSubmit(changePassword)}
          noValidate
        >
          {passwordMsg && <Banner {...passwordMsg} />}
          <Field
            id="current_password"
            label="Current password"
            error={we.current_password?.message}
          >
            <input
              id="current_password"
              type="password"
              className="input"
              autoComplete="current-password"
              aria-invalid={invalid(we.current_password)}
              aria-describedby={we.current_password ? "current_password-err" : undefined}
              {...password.register("current_password")}
            />
          </Field>
          <Field
            id="new_password"
            label="New password"
            hint="At least 10 characters. A short sentence is easy to type on a phone."
            error={we.new_password?.message}
          >
            <input
              id="new_password"
              type="password"
              className="input"
              autoComplete="new-password"
              aria-invalid={invalid(we.new_password)}
              aria-describedby={we.new_password ? "new_password-err" : undefined}
              {...password.register("new_password")}
            />
          </Field>
          <Field id="confirm" label="New password again" error={we.confirm?.message}>
            <input
              id="confirm"
              type="password"
              className="input"
              autoComplete="new-password"
              aria-invalid={invalid(we.confirm)}
              aria-describedby={we.confirm ? "confirm-err" : undefined}
              {...password.register("confirm")}
            />
          </Field>
          <div>
            <button
              type="submit"
              className="btn btn-primary"
              disabled={password.formState.isSubmitting}
            >
              {password.formState.isSubmitting ? "Changing…" : "Change password"}
            </button>
          </div>
        </form>
      </section>

      <section aria-labelledby="profile" className="card p-4 sm:p-5">
        <h2 id="profile" className="text-lg font-bold">
          Profile and display
        </h2>
        <form className="mt-3 grid gap-4" onSubmit={profile.handleSubmit(saveProfile)} noValidate>
          {profileMsg && <Banner {...profileMsg} />}
          <Field id="name" label="Name" error={pe.name?.message}>
            <input
              id="name"
              className="input"
              autoComplete="name"
              aria-invalid={invalid(pe.name)}
              aria-describedby={pe.name ? "name-err" : undefined}
              {...profile.register("name")}
            />
          </Field>
          <Field id="email" label="E-mail (your sign-in name)" error={pe.email?.message}>
            <input
              id="email"
              type="email"
              className="input"
              autoComplete="email"
              aria-invalid={invalid(pe.email)}
              aria-describedby={pe.email ? "email-err" : undefined}
              {...profile.register("email")}
            />
          </Field>
          <Field
            id="phone"
            label="Mobile phone for alert texts"
            hint="International form: + and country code, 8 to 15 digits, e.g. +1 555 010 0123. Leave empty for no texts."
            error={pe.phone?.message}
          >
            <input
              id="phone"
              type="tel"
              className="input"
              autoComplete="tel"
              aria-invalid={invalid(pe.phone)}
              aria-describedby={pe.phone ? "phone-err" : undefined}
              {...profile.register("phone")}
            />
          </Field>
          <fieldset className="grid gap-2">
            <legend className="label">Alerts reach me by</legend>
            <label className="flex min-h-11 items-center gap-3">
              <input type="checkbox" className="h-5 w-5" {...profile.register("notify_sms")} /> Text
              message
            </label>
            <label className="flex min-h-11 items-center gap-3">
              <input type="checkbox" className="h-5 w-5" {...profile.register("notify_email")} />{" "}
              E-mail
            </label>
            <label className="flex min-h-11 items-start gap-3 py-2">
              <input
                type="checkbox"
                className="mt-0.5 h-5 w-5 shrink-0"
                aria-describedby="notify_digest-hint"
                {...profile.register("notify_digest")}
              />
              <span>
                Daily digest e-mail
                <span id="notify_digest-hint" className="hint block">
                  One e-mail a day gathering the minor (information-level) alerts.
                </span>
              </span>
            </label>
            {channelWarning && (
              <p
                className="rounded-md bg-warn-bg px-3 py-2 text-sm font-semibold text-warn"
                role="status"
              >
                {channelWarning}
              </p>
            )}
          </fieldset>
          <Field id="units" label="Units">
            <select id="units" className="input" {...profile.register("units")}>
              <option value="us">°F and psi</option>
              <option value="si">°C and MPa</option>
            </select>
          </Field>
          <Field id="theme" label="Theme">
            <select id="theme" className="input" {...profile.register("theme")}>
              <option value="system">Follow this device</option>
              <option value="light">Light</option>
              <option value="dark">Dark (night shift)</option>
            </select>
          </Field>
          <div>
            <button
              type="submit"
              className="btn btn-primary"
              disabled={profile.formState.isSubmitting}
            >
              {profile.formState.isSubmitting ? "Saving…" : "Save"}
            </button>
          </div>
        </form>
      </section>
    </div>
  );
}
