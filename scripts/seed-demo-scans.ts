// Stores and checks the demo scans of the delivered demo orders (after scripts/seed-demo.ts); prints the checks as JSON.
import { db } from "~/db/client.server";
import { seedDemoScans } from "~/demo/seed-scans.server";

const outcomes = await seedDemoScans();
console.log(JSON.stringify(outcomes));
await db.$client.end();
