// Seeds the demo scenario into the database named by DATABASE_URL (the app's by default).
// The demo's orders go through the real payment flow, so the payment fake must be running (npm run services:up).
import { seedDemo } from "~/demo/seed.server";
import { seedDemoOrders } from "~/demo/seed-orders.server";
import { seedDemoScans } from "~/demo/seed-scans.server";
import { seedDemoScenario } from "~/demo/seed-scenario.server";
import { seedDemoDisputes } from "~/demo/seed-disputes.server";
import { seedDemoMessages } from "~/demo/seed-messages.server";
import { seedDemoRecords } from "~/demo/seed-records.server";
import { seedDemoLabRecords } from "~/demo/seed-lab-records.server";
import { db } from "~/db/client.server";
import { seedRequestLife } from "~/demo/seed-request-life.server";
import { seedDemoPurchaseOrders } from "~/demo/seed-purchase-orders.server";
import { seedDemoProfiles } from "~/demo/seed-profiles.server";
import { seedDemoTransfers } from "~/demo/seed-transfer.server";
import { seedDemoInvoices } from "~/demo/seed-invoices.server";
import { seedDemoStatements } from "~/demo/seed-statements.server";
import { seedDemoTiers } from "~/demo/seed-tiers.server";
import { seedDemoTrends } from "~/demo/seed-trends.server";
import { seedDemoCalibrations } from "~/demo/seed-calibrations.server";

const t0 = Date.now();
const result = await seedDemo();
// Profiles first: the tax of each accepted quote and the parties on each invoice are fixed from them.
await seedDemoProfiles();
await seedDemoOrders();
const scans = await seedDemoScans();
const scenario = await seedDemoScenario();
await seedDemoDisputes();
await seedDemoMessages();
await seedRequestLife();
await seedDemoRecords();
await seedDemoLabRecords();
await seedDemoPurchaseOrders();
await seedDemoTransfers();
await seedDemoInvoices();
await seedDemoStatements();
await seedDemoTiers();
await seedDemoTrends();
await seedDemoCalibrations();
console.log(
  `demo scenario seeded in ${((Date.now() - t0) / 1000).toFixed(1)} s: ${result.organisations} organisations, ${result.people} people, requests and orders in every state (${scenario.requests} made this run), ${scans.length} checked demo scans`,
);
await db.$client.end();
