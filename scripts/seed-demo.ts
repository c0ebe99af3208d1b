// Seeds the demo scenario into the database named by DATABASE_URL (the app's by default).
// The demo's orders go through the real payment flow, so the payment fake must be running (npm run services:up).
import { seedDemo } from "~/demo/seed.server";
import { seedDemoOrders } from "~/demo/seed-orders.server";
import { db } from "~/db/client.server";

const result = await seedDemo();
await seedDemoOrders();
console.log(`demo scenario seeded: ${result.organisations} organisations, ${result.people} people, orders in every money state`);
await db.$client.end();
