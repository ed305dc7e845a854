import { env } from "./env";

const levels = { debug: 10, info: 20, warn: 30, error: 40 } as const;
type Level = keyof typeof levels;

function write(level: Level, msg: string, fields: Record<string, unknown> = {}) {
  if (levels[level] < levels[env().LOG_LEVEL]) return;
  const out: Record<string, unknown> = { t: new Date().toISOString(), level, msg };
  for (const [k, v] of Object.entries(fields)) {
    out[k] = v instanceof Error ? { name: v.name, message: v.message, stack: v.stack } : v;
  }
  (level === "error" || level === "warn" ? process.stderr : process.stdout).write(
    JSON.stringify(out) + "\n",
  );
}

/** One-line JSON logs on stdout (info, debug) and stderr (warn, error). */
export const log = {
  debug: (msg: string, f?: Record<string, unknown>) => write("debug", msg, f),
  info: (msg: string, f?: Record<string, unknown>) => write("info", msg, f),
  warn: (msg: string, f?: Record<string, unknown>) => write("warn", msg, f),
  error: (msg: string, f?: Record<string, unknown>) => write("error", msg, f),
};
