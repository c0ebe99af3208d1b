// Seeds the demo scenario into the database named by DATABASE_URL (the app's by default).
import { seedDemo } from "~/demo/seed.server";
import { db } from "~/db/client.server";

const result = await seedDemo();
console.log(`demo scenario seeded: ${result.organisations} organisations, ${result.people} people`);
await db.$client.end();
