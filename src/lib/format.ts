/** Dates and times in the plant's own time zone (shared by pages and islands). */
export function formatDateTime(
  ms: number,
  timeZone: string,
  style: "short" | "medium" = "medium",
): string {
  return new Date(ms).toLocaleString("en-US", { dateStyle: style, timeStyle: "short", timeZone });
}

/** Reads an API error (RFC 9457 problem details) into one sentence and per-field messages. */
export async function readProblem(
  res: Response,
): Promise<{ message: string; fields: Record<string, string> }> {
  try {
    const body = (await res.json()) as {
      title?: string;
      detail?: string;
      errors?: { field?: string; error: string }[];
    };
    const fields: Record<string, string> = {};
    for (const e of body.errors ?? []) if (e.field) fields[e.field] = e.error;
    return { message: body.detail ?? body.title ?? `The server answered ${res.status}.`, fields };
  } catch {
    return { message: `The server answered ${res.status}.`, fields: {} };
  }
}
