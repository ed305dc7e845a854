import { z } from "zod";

/**
 * Every environment variable Plinth reads, with its default. The README's configuration
 * table is written from this list; keep the two together.
 */
const envSchema = z.object({
  NODE_ENV: z.string().default("development"),
  HOST: z.string().default("0.0.0.0"),
  PORT: z.coerce.number().int().min(0).max(65535).default(4321),
  DATABASE_PATH: z.string().default("data/plinth.db"),
  SQLITE_CACHE_MIB: z.coerce.number().int().min(2).max(16_384).default(64),
  MQTT_PORT: z.coerce.number().int().min(0).max(65535).default(1883),
  MQTT_HOST: z.string().default("127.0.0.1"),
  MQTT_URL: z.string().optional(),
  MQTT_CLIENT_ID: z.string().min(1).default("plinth-ingest"),
  PLINTH_DEMO: z.enum(["0", "1"]).default("0"),
  SESSION_DAYS: z.coerce.number().positive().default(14),
  COOKIE_SECURE: z.enum(["auto", "true", "false"]).default("auto"),
  LOGIN_MAX_FAILURES: z.coerce.number().int().positive().default(5),
  LOGIN_WINDOW_MINUTES: z.coerce.number().positive().default(15),
  LOG_LEVEL: z.enum(["debug", "info", "warn", "error"]).default("info"),
  // Notices out (e-mail, texts) and texts back: src/lib/server/notify/.
  SMTP_URL: z.url().optional(),
  MAIL_FROM: z.string().min(3).default("Plinth <plinth@localhost>"),
  SMS_ACCOUNT_SID: z
    .string()
    .regex(/^AC[0-9a-zA-Z]{8,}$/, "starts with AC")
    .optional(),
  SMS_AUTH_TOKEN: z.string().min(8).optional(),
  SMS_FROM: z.string().min(3).optional(),
  SMS_API_BASE: z.url().optional(),
  PUBLIC_URL: z.url().optional(),
  NOTIFY_FAKES: z.enum(["0", "1"]).optional(),
  NOTIFY_FAKE_SMTP_PORT: z.coerce.number().int().min(0).max(65535).default(0),
  NOTIFY_FAKE_SMS_PORT: z.coerce.number().int().min(0).max(65535).default(0),
  // Alerts: src/lib/server/alerts/.
  ALERT_TICK_SECONDS: z.coerce.number().min(0.05).max(3600).default(15),
  ALERT_DIGEST_HOUR: z.coerce.number().int().min(0).max(23).default(7),
  ALERT_DIGEST_EVERY_MINUTES: z.coerce.number().positive().optional(),
});

export type Env = z.infer<typeof envSchema>;

let cached: Env | undefined;

/** Reads and checks the environment once; a bad value stops the start with a clear message. */
export function env(): Env {
  if (cached) return cached;
  const parsed = envSchema.safeParse(process.env);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join(".")}: ${i.message}`);
    throw new Error(`Plinth: bad environment:\n${lines.join("\n")}`);
  }
  cached = parsed.data;
  return cached;
}

export const isProduction = () => env().NODE_ENV === "production";
export const isDemo = () => env().PLINTH_DEMO === "1";
