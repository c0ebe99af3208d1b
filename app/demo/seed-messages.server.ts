// Demo messages (invented): a lab's question on an open request and the client's answer, and a short exchange on
// an order with delivered data. Made through the messages model, so notices and e-mails go out as in use.
// Idempotent: a thread that already has messages is left as it is.
import { eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { orderThreadFor, postMessage, requestThreadForLab, threadMessages, type Thread } from "~/models/messages/messages.server";

async function idOf(table: "organisations" | "users", column: "slug" | "email", value: string) {
  const t = table === "organisations" ? schema.organisations : schema.users;
  const col = column === "slug" ? schema.organisations.slug : schema.users.email;
  const [row] = await db.select({ id: t.id }).from(t).where(eq(col, value));
  return row?.id ?? null;
}

async function say(thread: Thread | null, lines: { userId: string | null; organisationId: string | null; body: string }[]) {
  if (!thread || (await threadMessages(thread)).length > 0) return 0;
  let made = 0;
  for (const l of lines) {
    if (!l.userId || !l.organisationId) continue;
    const posted = await postMessage(thread, { userId: l.userId, organisationId: l.organisationId }, { body: l.body });
    if (posted.ok) made++;
  }
  return made;
}

export async function seedDemoMessages() {
  const halvorsen = await idOf("organisations", "slug", "halvorsen-cathode-works");
  const granite = await idOf("organisations", "slug", "granite-ridge-characterisation");
  const ingrid = await idOf("users", "email", "owner@halvorsen.example");
  const operator = await idOf("users", "email", "operator@graniteridge.example");
  const marcus = await idOf("users", "email", "lab@graniteridge.example");
  if (!halvorsen || !granite) return { messages: 0 };

  const [open] = await db.select({ id: schema.requests.id }).from(schema.requests).where(eq(schema.requests.title, "Phase purity of NMC811 lot HC-2634"));
  const [delivered] = await db
    .select({ id: schema.orders.id })
    .from(schema.orders)
    .innerJoin(schema.requests, eq(schema.requests.id, schema.orders.requestId))
    .where(eq(schema.requests.title, "Lattice check of LFP production lot HC-2645"));

  let messages = 0;
  messages += await say(open ? await requestThreadForLab(open.id, granite) : null, [
    {
      userId: operator,
      organisationId: granite,
      body: "Before we quote: is the NMC811 powder stored under argon? If it has seen air for days we would measure in a sealed holder, which adds a little to the price.",
    },
    {
      userId: ingrid,
      organisationId: halvorsen,
      body: "It ships in a sealed pouch under argon and should stay that way until measurement, so please plan the sealed holder.",
    },
  ]);
  messages += await say(delivered ? ((await orderThreadFor(delivered.id, halvorsen))?.thread ?? null) : null, [
    {
      userId: marcus,
      organisationId: granite,
      body: "The second sample shows a weak shoulder near 35.6° 2θ; the check marks it for review. The raw file is in your data room if you want a second look.",
    },
    {
      userId: ingrid,
      organisationId: halvorsen,
      body: "Thank you — we will compare it with our in-house scan of the same lot before accepting.",
    },
  ]);
  return { messages };
}
