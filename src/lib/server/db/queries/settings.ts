import { eq } from "drizzle-orm";
import { getDb } from "../client";
import { settings } from "../schema";

export const settingDefaults = {
  plant_name: "Plinth",
  time_zone: "UTC",
} as const;

export type SettingKey = keyof typeof settingDefaults;

export function getSetting(key: SettingKey): string {
  const row = getDb().select().from(settings).where(eq(settings.key, key)).get();
  return row?.value ?? settingDefaults[key];
}

export function setSetting(key: SettingKey, value: string, byUserId: number | null = null): void {
  getDb()
    .insert(settings)
    .values({ key, value, updatedAt: Date.now(), updatedBy: byUserId })
    .onConflictDoUpdate({
      target: settings.key,
      set: { value, updatedAt: Date.now(), updatedBy: byUserId },
    })
    .run();
}
