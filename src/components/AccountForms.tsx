import { zodResolver } from "@hookform/resolvers/zod";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { z } from "zod";
import { readProblem } from "@/lib/format";
import { emailField, nameField, newPasswordField, phoneField } from "@/lib/schemas/users";
import { SelectField, SubmitButton, TextField } from "./Field";
import { Banner, type Notice } from "./Notice";

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

/** One's own account: profile, units, theme, alert channels, and password. */
export default function AccountForms({ me, mustChangePassword }: Props) {
  const [profileMsg, setProfileMsg] = useState<Notice | null>(null);
  const [passwordMsg, setPasswordMsg] = useState<Notice | null>(null);
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
          <TextField
            id="current_password"
            label="Current password"
            error={we.current_password?.message}
            type="password"
            autoComplete="current-password"
            {...password.register("current_password")}
          />
          <TextField
            id="new_password"
            label="New password"
            hint="At least 10 characters. A short sentence is easy to type on a phone."
            error={we.new_password?.message}
            type="password"
            autoComplete="new-password"
            {...password.register("new_password")}
          />
          <TextField
            id="confirm"
            label="New password again"
            error={we.confirm?.message}
            type="password"
            autoComplete="new-password"
            {...password.register("confirm")}
          />
          <div>
            <SubmitButton busy={password.formState.isSubmitting} busyLabel="Changing…">
              Change password
            </SubmitButton>
          </div>
        </form>
      </section>

      <section aria-labelledby="profile" className="card p-4 sm:p-5">
        <h2 id="profile" className="text-lg font-bold">
          Profile and display
        </h2>
        <form className="mt-3 grid gap-4" onSubmit={profile.handleSubmit(saveProfile)} noValidate>
          {profileMsg && <Banner {...profileMsg} />}
          <TextField
            id="name"
            label="Name"
            error={pe.name?.message}
            autoComplete="name"
            {...profile.register("name")}
          />
          <TextField
            id="email"
            label="E-mail (your sign-in name)"
            error={pe.email?.message}
            type="email"
            autoComplete="email"
            {...profile.register("email")}
          />
          <TextField
            id="phone"
            label="Mobile phone for alert texts"
            hint="International form: + and country code, 8 to 15 digits, e.g. +1 555 010 0123. Leave empty for no texts."
            error={pe.phone?.message}
            type="tel"
            autoComplete="tel"
            {...profile.register("phone")}
          />
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
            {channelWarning && <Banner tone="warn" text={channelWarning} />}
          </fieldset>
          <SelectField id="units" label="Units" {...profile.register("units")}>
            <option value="us">°F and psi</option>
            <option value="si">°C and MPa</option>
          </SelectField>
          <SelectField id="theme" label="Theme" {...profile.register("theme")}>
            <option value="system">Follow this device</option>
            <option value="light">Light</option>
            <option value="dark">Dark (night shift)</option>
          </SelectField>
          <div>
            <SubmitButton busy={profile.formState.isSubmitting} busyLabel="Saving…">
              Save
            </SubmitButton>
          </div>
        </form>
      </section>
    </div>
  );
}
