// Builds the template database the tests copy: a fresh database with every migration applied.
import pg from "pg";
import { migrateDatabase } from "../server/migrate";
import { databaseUrl } from "./postgres";
import { isMain } from "./process";

export const TEMPLATE_DB = "diffractory_template";

/** Drops and recreates the template from the real migrations. */
export async function buildTemplate() {
  const admin = new pg.Client({ connectionString: databaseUrl("diffractory_test") });
  await admin.connect();
  try {
    await dropForce(admin, TEMPLATE_DB);
    await admin.query(`create database ${TEMPLATE_DB}`);
  } finally {
    await admin.end();
  }
  await migrateDatabase(databaseUrl(TEMPLATE_DB));
}

/**
 * DROP DATABASE … WITH (FORCE) refuses while a server process of no login role (an autovacuum worker) is in the
 * database, with "must be a member of the role whose process is being terminated"; such a worker ends by itself
 * within moments, so the drop is tried again a few times before giving up.
 */
async function dropForce(client: pg.Client, name: string) {
  for (let attempt = 1; ; attempt++) {
    try {
      await client.query(`drop database if exists ${name} with (force)`);
      return;
    } catch (err) {
      if (attempt >= 10 || !/must be a member of the role whose process is being terminated/.test((err as Error).message)) throw err;
      await new Promise((r) => setTimeout(r, 300));
    }
  }
}

/** A new database copied from the template; returns its URL and a function that drops it. */
export async function cloneTemplate(name: string) {
  const admin = new pg.Client({ connectionString: databaseUrl("diffractory_test") });
  await admin.connect();
  try {
    await dropForce(admin, name);
    await admin.query(`create database ${name} template ${TEMPLATE_DB}`);
  } finally {
    await admin.end();
  }
  return {
    url: databaseUrl(name),
    drop: async () => {
      const c = new pg.Client({ connectionString: databaseUrl("diffractory_test") });
      await c.connect();
      try {
        await dropForce(c, name);
      } finally {
        await c.end();
      }
    },
  };
}

if (isMain(import.meta.url)) {
  await buildTemplate();
  console.log(`${TEMPLATE_DB} built from drizzle/`);
}
