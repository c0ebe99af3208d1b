// Gives each integration test file its own database, copied from the template built by the real migrations.
import { afterAll } from "vitest";
import { cloneTemplate } from "../../services/test-db";

const name = `t_${process.pid}_${Math.random().toString(36).slice(2, 8)}`;
const handle = await cloneTemplate(name);
process.env.DATABASE_URL = handle.url;

afterAll(async () => {
  // The app keeps its pool on globalThis; close it so the next file in this worker opens its own.
  const g = globalThis as { __diffractoryDb?: { $client: { end(): Promise<void> } } };
  if (g.__diffractoryDb) {
    await g.__diffractoryDb.$client.end();
    delete g.__diffractoryDb;
  }
  await handle.drop();
});
