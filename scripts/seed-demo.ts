// Seeds the demo scenario into the database named by DATABASE_URL (the app's by default).
// The demo's orders go through the real payment flow, so the payment fake must be running (npm run services:up).
import { seedDemo } from "~/demo/seed.server";
import { seedDemoOrders } from "~/demo/seed-orders.server";
import { seedDemoScans } from "~/demo/seed-scans.server";
import { db } from "~/db/client.server";

const result = await seedDemo();
await seedDemoOrders();
const scans = await seedDemoScans();
console.log(`demo scenario seeded: ${result.organisations} organisations, ${result.people} people, orders in every money state, ${scans.length} checked demo scans`);
await db.$client.end();
