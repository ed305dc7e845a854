import { sql } from "drizzle-orm";
import { index, integer, sqliteTable, text, uniqueIndex } from "drizzle-orm/sqlite-core";
import { bool, createdAtMs, epochMs } from "./columns";

export const roleValues = ["manager", "qc", "operator", "viewer"] as const;
export const unitSystemValues = ["us", "si"] as const;
export const themeValues = ["system", "light", "dark"] as const;

/** People who sign in. E-mail is stored lower-case and is the sign-in name. */
export const users = sqliteTable(
  "users",
  {
    id: integer("id").primaryKey({ autoIncrement: true }),
    email: text("email").notNull(),
    name: text("name").notNull(),
    role: text("role", { enum: roleValues }).notNull(),
    passwordHash: text("password_hash").notNull(),
    active: bool("active").notNull().default(true),
    mustChangePassword: bool("must_change_password").notNull().default(false),
    phone: text("phone"),
    /** "us": °F and psi; "si": °C and MPa. Storage is always SI. */
    units: text("units", { enum: unitSystemValues }).notNull().default("us"),
    theme: text("theme", { enum: themeValues }).notNull().default("system"),
    /** Channel choices for alerts, e.g. {"sms":true,"email":true}; read by the notifier. */
    notifyJson: text("notify_json").notNull().default('{"sms":true,"email":true}'),
    createdAt: createdAtMs(),
    updatedAt: epochMs("updated_at"),
    lastSignInAt: epochMs("last_sign_in_at"),
  },
  (t) => [uniqueIndex("users_email_unique").on(sql`lower(${t.email})`)],
);

/**
 * Sign-in sessions, in the shape the session library's Drizzle adapter expects.
 * The adapter writes expiry in epoch seconds; the column name says so.
 */
export const sessions = sqliteTable(
  "sessions",
  {
    id: text("id").primaryKey(),
    userId: integer("user_id")
      .notNull()
      .references(() => users.id, { onDelete: "cascade" }),
    expiresAt: integer("expires_at_s").notNull(),
  },
  (t) => [index("sessions_user_idx").on(t.userId)],
);

/** Keys for scripts (the public API). Only a SHA-256 of the key is kept. */
export const apiTokens = sqliteTable("api_tokens", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  name: text("name").notNull(),
  keyHash: text("key_hash").notNull().unique(),
  keyPrefix: text("key_prefix").notNull(),
  role: text("role", { enum: roleValues }).notNull(),
  createdBy: integer("created_by").references(() => users.id),
  createdAt: createdAtMs(),
  lastUsedAt: epochMs("last_used_at"),
  revokedAt: epochMs("revoked_at"),
});

/** Sensor gateways: they may only send readings (HTTP bearer key or MQTT name + key). */
export const gateways = sqliteTable("gateways", {
  id: integer("id").primaryKey({ autoIncrement: true }),
  name: text("name").notNull().unique(),
  keyHash: text("key_hash").notNull().unique(),
  keyPrefix: text("key_prefix").notNull(),
  createdBy: integer("created_by").references(() => users.id),
  createdAt: createdAtMs(),
  lastUsedAt: epochMs("last_used_at"),
  revokedAt: epochMs("revoked_at"),
});
