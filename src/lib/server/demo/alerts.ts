/**
 * The demo plant's alerting: the default rules, and a rota with the demo operator on call
 * around the clock (texts to their phone) and QC behind them, so a dry bag in the demo ends
 * as a text in the dev outbox and an unanswered one escalates.
 */
import { eq } from "drizzle-orm";
import { getDb } from "../db/client";
import { seedDefaultRules } from "../db/queries/alertRules";
import { onCallShifts, users } from "../db/schema";

export function seedDemoAlerting(): void {
  const db = getDb();
  const byEmail = (email: string) =>
    db.select({ id: users.id }).from(users).where(eq(users.email, email)).get();
  const qc = byEmail("qc@example.com");
  const operator = byEmail("operator@example.com");
  seedDefaultRules(qc?.id ?? null);
  if (!operator || !qc) return;
  const existing = db.select({ id: onCallShifts.id }).from(onCallShifts).limit(1).get();
  if (existing) return;
  db.insert(onCallShifts)
    .values([
      {
        name: "Around the clock",
        userId: operator.id,
        weekdays: 127,
        startMinute: 0,
        endMinute: 0,
        escalationOrder: 0,
      },
      {
        name: "QC back-up",
        userId: qc.id,
        weekdays: 127,
        startMinute: 0,
        endMinute: 0,
        escalationOrder: 1,
      },
    ])
    .run();
}
