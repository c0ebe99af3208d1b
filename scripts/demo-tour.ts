// Prints the demo tour: per demo account, what to look at and its URL (APP_URL, default http://127.0.0.1:3000).
import { db } from "~/db/client.server";
import { demoTour } from "~/demo/tour.server";

console.log(await demoTour(process.env.APP_URL ?? `http://127.0.0.1:${process.env.PORT ?? 3000}`));
await db.$client.end();
