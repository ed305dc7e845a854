/** Applies every pending migration to DATABASE_PATH (the server also does this at start). */
import { closeDatabase, migrateDatabase } from "@/lib/server/db/client";
import { env } from "@/lib/server/env";

migrateDatabase();
closeDatabase();
console.log(`Migrated ${env().DATABASE_PATH}.`);
