// Builds the template database the tests copy: a fresh database with every migration applied.
import pg from "pg";
import { migrateDatabase } from "./migrate";
import { databaseUrl } from "./postgres";
import { isMain } from "./process";

export const TEMPLATE_DB = "diffractory_template";

/** Drops and recreates the template from the real migrations. */
export async function buildTemplate() {
  const admin = new pg.Client({ connectionString: databaseUrl("diffractory_test") });
  await admin.connect();
  try {
    await admin.query(`drop database if exists ${TEMPLATE_DB} with (force)`);
    await admin.query(`create database ${TEMPLATE_DB}`);
  } finally {
    await admin.end();
  }
  await migrateDatabase(databaseUrl(TEMPLATE_DB));
}

/** A new database copied from the template; returns its URL and a function that drops it. */
export async function cloneTemplate(name: string) {
  const admin = new pg.Client({ connectionString: databaseUrl("diffractory_test") });
  await admin.connect();
  try {
    await admin.query(`drop database if exists ${name} with (force)`);
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
        await c.query(`drop database if exists ${name} with (force)`);
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
