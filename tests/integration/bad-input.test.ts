// Bad input, in-process: a table of refused inputs across forms, API parameters, uploads and the payment
// webhook. Each case must answer a 4xx with a sentence the user can act on, and leave every table as it was.
// Body-level cases (oversized, cut off, wrong Content-Type, invalid UTF-8 bytes) go over HTTP in
// bad-input-http.test.ts.
import { createHash, randomUUID } from "node:crypto";
import Stripe from "stripe";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { moneyWorld, type MoneyWorld } from "./money-fixtures";
import { changedTables, shown, snapshot } from "./db-snapshot";
import { SHARE_LINK_MAX_LIVE } from "~/domain/order-files";
import { INSTRUMENT_FIELDS, SAMPLE_FIELDS } from "./form-fixtures";
import { callRoute, cookieFrom, formRequest, getRequest, type RouteAnswer } from "./route-call";

const ORIGIN = "http://127.0.0.1:3000";
const PASSWORD = "diffractory-demo";
const CLIENT = "owner@halvorsen.example";
const LAB = "lab@graniteridge.example";

let w: MoneyWorld;
let app: Awaited<ReturnType<typeof loadApp>>;

async function loadApp() {
  return {
    signIn: await import("~/routes/public/sign-in"),
    createAccount: await import("~/routes/public/create-account"),
    labProfile: await import("~/routes/public/lab-profile"),
    samples: await import("~/routes/client/request-samples"),
    hazards: await import("~/routes/client/request-hazards"),
    measurement: await import("~/routes/client/request-measurement"),
    labsStep: await import("~/routes/client/request-labs"),
    clientRequest: await import("~/routes/client/request"),
    clientOrder: await import("~/routes/client/order"),
    sdsUpload: await import("~/routes/client/request-sds-upload"),
    labRequest: await import("~/routes/lab/request"),
    labOrder: await import("~/routes/lab/order"),
    capabilities: await import("~/routes/lab/capabilities"),
    priceList: await import("~/routes/lab/price-list"),
    vetting: await import("~/routes/lab/vetting"),
    vettingUpload: await import("~/routes/lab/vetting-upload"),
    uploads: await import("~/routes/lab/order-uploads"),
    upload: await import("~/routes/lab/order-upload"),
    tokens: await import("~/routes/lab/api-tokens"),
    v1Start: await import("~/routes/api/v1/order-files"),
    v1Complete: await import("~/routes/api/v1/order-file-complete"),
    apiLabs: await import("~/routes/api/labs"),
    apiOrders: await import("~/routes/api/orders"),
    apiOrder: await import("~/routes/api/order"),
    matches: await import("~/routes/api/request-matches"),
    notifications: await import("~/routes/api/notifications"),
    webhook: await import("~/routes/api/webhooks-payments"),
    config: (await import("~/config.server")).config,
    labs: await import("~/models/labs/vetting.server"),
    storage: await import("~/models/files/storage.server"),
    requests: await import("~/models/requests/requests.server"),
    shareLinks: await import("~/models/files/share-links.server"),
    dataRoomOrder: await import("~/routes/client/data-room-order"),
    scanCheck: await import("~/models/checks/scan-check.server"),
    simulate: await import("~/diffraction/simulate"),
    structures: await import("~/diffraction/structures"),
    boss: await import("~/jobs/queues.server"),
  };
}

const cookies: Record<string, string> = {};
async function as(email: string) {
  cookies[email] ??= cookieFrom(await callRoute(app.signIn.action, formRequest("/sign-in", { email, password: PASSWORD })))!;
  return cookies[email];
}
const sha256 = (bytes: string | Uint8Array) => createHash("sha256").update(bytes).digest("hex");
const inDays = (days: number) => new Date(Date.now() + days * 86_400_000).toISOString().slice(0, 10);

function jsonRequest(path: string, body: string, headers: Record<string, string> = {}) {
  return new Request(`${ORIGIN}${path}`, { method: "POST", body, headers: { "Content-Type": "application/json", Origin: ORIGIN, ...headers } });
}
function rawRequest(path: string, body: BodyInit, contentType: string, cookie?: string) {
  return new Request(`${ORIGIN}${path}`, {
    method: "POST",
    body,
    headers: { "Content-Type": contentType, Origin: ORIGIN, ...(cookie ? { Cookie: cookie } : {}) },
  });
}

// ───────────── the world the corpus works on ─────────────

const ids = {
  draft: "",
  draftSample: "",
  openRequest: "",
  awardedRequest: "",
  acceptedQuote: "",
  instrument: "",
  fundsHeld: "",
  shipped: "",
  delivered: "",
  measuring: "",
  measuringSample: "",
  apiToken: "",
  vettingLab: "",
  vettingCookie: "",
  sessionId: "",
  webhookEvent: "",
};
const signedWebhook = { raw: "", header: "" };

const SAMPLE = SAMPLE_FIELDS;
const NEW_REQUEST = { title: "Cathode batch 12", technique: "powder_reflection", ...SAMPLE };
const MEASUREMENT = {
  rangeKind: "two_theta",
  rangeMin: "10",
  rangeMax: "90",
  preferredSource: "Cu",
  temperaturePoints: "",
  atmosphere: "air",
  quality: "standard",
  deadline: inDays(40),
  budget: "",
  currency: "EUR",
};
const PRICE_LIST = {
  currency: "EUR",
  "perSample.powder_reflection": "180.00",
  perExtraTemperaturePoint: "45.00",
  perInstrumentHour: "0",
  samplePreparation: "15.00",
  hazardousHandling: "60.00",
  rushMultiplier: "1.5",
  turnaroundDays: "10",
};
const INSTRUMENT = { ...INSTRUMENT_FIELDS, name: "Reflection diffractometer 3", sampleForms: "powder" };
const quoteFields = (extra: Record<string, string> = {}) => ({
  intent: "send",
  "items[0].description": "Powder reflection, per sample",
  "items[0].quantity": "2",
  "items[0].unitPrice": "180.00",
  validUntil: inDays(14),
  turnaroundDays: "8",
  instrumentId: ids.instrument,
  notes: "",
  ...extra,
});

const PDF = "%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n";

function siliconScan() {
  const sim = app.simulate.simulatePattern({
    structure: app.structures.SILICON,
    cell: { a: 5.4312, b: 5.4312, c: 5.4312, alpha: 90, beta: 90, gamma: 90 },
    radiation: { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" },
    twoThetaMin: 15,
    twoThetaMax: 140,
    step: 0.02,
    background: { constant: 120 },
    noise: { seed: 11 },
  });
  return app.simulate.formatScanAsXy(sim, "Silicon calibration scan (simulated)");
}

// Malformed scan files, as an instrument or a careless export would write them.
const SCAN_FILES = {
  /** Cut off in the middle: comments only, the data never arrived. */
  truncatedXy: "# Bruker-style export\n# 2theta intensity\n",
  /** Words where numbers should be. */
  textAsXy: "This is the lab's shipping note.\nThe parcel arrived in good order.\nSigned, reception.\n".repeat(20),
  /** A pdCIF whose powder loop stops half-way through a row. */
  truncatedCif:
    "data_si\n_pd_meas_2theta_range_min 10\n_pd_meas_2theta_range_max 20\n_pd_meas_2theta_range_inc 0.02\nloop_\n_pd_meas_2theta_scan\n_pd_meas_counts_total\n10.00 120\n10.02 135\n10.04\n",
  /** A CIF without any powder pattern. */
  cifWithoutPattern: "data_si\n_cell_length_a 5.431\n_cell_length_b 5.431\n_cell_length_c 5.431\n_symmetry_space_group_name_H-M 'F d -3 m'\n",
};
/** Bytes that are not UTF-8 at all (Latin-1 "Intensität" and stray continuation bytes) in an xy file. */
const INVALID_UTF8 = Buffer.concat([Buffer.from("# Intensit"), Buffer.from([0xe4, 0x74, 0x80, 0xbf, 0xfe, 0xff]), Buffer.from("\n10.0 \xff\xfe\n")]);

async function putVettingFiles(tag: string, scan: string | Uint8Array, scanName = "calibration.xy") {
  const prefix = app.labs.vettingPrefix(ids.vettingLab);
  const certificateKey = `${prefix}/${tag}/accreditation.pdf`;
  const scanKey = `${prefix}/${tag}/${scanName}`;
  await app.storage.putObject(certificateKey, PDF, "application/pdf");
  await app.storage.putObject(scanKey, scan, "text/plain");
  return {
    description: "Contract powder diffraction for mineral producers, one Bragg–Brentano instrument.",
    accreditationNumber: "ISO17025-QX-0091",
    accreditationExpiry: "2029-03-31",
    certificateKey,
    certificateName: "accreditation.pdf",
    certificateSha256: sha256(PDF),
    scanKey,
    scanName,
    scanSha256: sha256(scan),
    attest: "on",
    attestedName: "Tamsin Oyelaran-Kerr",
    standard: "si_srm640c",
    instrumentName: "Reflection diffractometer 1",
    anode: "Cu",
    monochromation: "k_alpha_doublet",
  };
}

/** A lab upload started and its bytes PUT to storage; the `complete` step is the case. */
async function startedUpload(name: string, body: string | Uint8Array) {
  const cookie = await as(LAB);
  const size = typeof body === "string" ? Buffer.byteLength(body) : body.length;
  const start = await callRoute(
    app.uploads.action,
    jsonRequest(`/lab/orders/${ids.measuring}/uploads`, JSON.stringify({ name, size, kind: "scan", sampleId: ids.measuringSample }), { Cookie: cookie }),
    { id: ids.measuring },
  );
  expect(start.status, JSON.stringify(start.body)).toBe(201);
  const started = start.body as { fileId: string; upload: { url: string; headers: Record<string, string> } };
  const put = await fetch(started.upload.url, { method: "PUT", body: typeof body === "string" ? body : Buffer.from(body), headers: started.upload.headers });
  expect(put.status).toBe(200);
  return started.fileId;
}

function signed(payload: string) {
  return Stripe.webhooks.generateTestHeaderString({ payload, secret: app.config.payments.webhookSecret });
}
function webhookRequest(raw: string, signature?: string, contentType = "application/json") {
  const headers: Record<string, string> = { "Content-Type": contentType };
  if (signature !== undefined) headers["Stripe-Signature"] = signature;
  return new Request(`${ORIGIN}/api/webhooks/payments`, { method: "POST", body: raw, headers });
}

beforeAll(async () => {
  w = await moneyWorld();
  app = await loadApp();
  await w.onboardLab();
  const { db, schema, eq } = w;
  const client = await as(CLIENT);

  // A draft at the hazards step, made through the wizard.
  const draft = await callRoute(app.samples.action, formRequest("/client/requests/new", NEW_REQUEST, client));
  expect(draft.status).toBe(302);
  ids.draft = draft.headers.get("location")!.split("/")[3];
  ids.draftSample = (await db.select().from(schema.samples).where(eq(schema.samples.requestId, ids.draft)))[0].id;

  // An open request at Granite Ridge with its hazards acknowledged, for the quote builder.
  const [open] = await db
    .insert(schema.requests)
    .values({
      organisationId: w.halvorsen.id,
      createdBy: w.owner.id,
      title: "Open request for quotes",
      state: "open",
      rangeMin: 10,
      rangeMax: 90,
      deadline: inDays(60),
      openedAt: new Date(),
    })
    .returning();
  ids.openRequest = open.id;
  await db
    .insert(schema.samples)
    .values({ requestId: open.id, label: "NMC-3", formula: "LiNi0.8Mn0.1Co0.1O2", elements: ["Li", "Ni", "Mn", "Co", "O"], form: "powder", massMg: 300 });
  ids.instrument = (await db.select().from(schema.instruments).where(eq(schema.instruments.labId, w.granite.id)))[0].id;
  const ack = await callRoute(app.labRequest.action, formRequest(`/lab/requests/${open.id}`, { intent: "acknowledge" }, await as(LAB)), { id: open.id });
  expect(ack.status).toBe(302);
  const sent = await callRoute(app.labRequest.action, formRequest(`/lab/requests/${open.id}`, quoteFields(), await as(LAB)), { id: open.id });
  expect(sent.status, JSON.stringify(sent.body)).toBe(302);

  // A second open request whose quote the client has accepted once already (the replay case accepts again).
  const [awarded] = await db
    .insert(schema.requests)
    .values({
      organisationId: w.halvorsen.id,
      createdBy: w.owner.id,
      title: "Request accepted once",
      state: "open",
      rangeMin: 10,
      rangeMax: 90,
      deadline: inDays(60),
      openedAt: new Date(),
    })
    .returning();
  ids.awardedRequest = awarded.id;
  const [quote] = await db
    .insert(schema.quotes)
    .values({
      requestId: awarded.id,
      labId: w.granite.id,
      state: "sent",
      lineItems: [{ description: "Measurement", quantity: 1, unitMinor: 18_000, totalMinor: 18_000 }],
      totalMinor: 18_000,
      currency: "EUR",
      validUntil: new Date(Date.now() + 7 * 86_400_000),
      turnaroundDays: 8,
      instrumentId: ids.instrument,
    })
    .returning();
  ids.acceptedQuote = quote.id;
  const accepted = await callRoute(app.clientRequest.action, formRequest(`/client/requests/${awarded.id}`, { intent: "accept", quoteId: quote.id }, client), {
    id: awarded.id,
  });
  expect(accepted.status).toBe(302);

  // Orders: paid (funds held), shipped once, delivered, and measuring with one sample.
  ids.fundsHeld = await w.makeOrder();
  const paid = await w.pay(ids.fundsHeld);
  ids.sessionId = paid.sessionId;
  ids.shipped = await w.makeOrder();
  await w.pay(ids.shipped);
  const ship = await callRoute(
    app.clientOrder.action,
    formRequest(`/client/orders/${ids.shipped}`, { intent: "ship", carrier: "Nordpost", trackingNumber: "NP 4471 2290" }, client),
    { id: ids.shipped },
  );
  expect(ship.status).toBe(302);
  ids.delivered = await w.makeOrder();
  await w.pay(ids.delivered);
  await w.deliver(ids.delivered);
  const dispute = await callRoute(
    app.clientOrder.action,
    formRequest(`/client/orders/${ids.delivered}`, { intent: "dispute", reason: "The scans cover 10–60° 2θ, not the 10–90° quoted." }, client),
    { id: ids.delivered },
  );
  expect(dispute.status).toBe(302);
  ids.measuring = await w.makeOrder();
  await w.pay(ids.measuring);
  const [order] = await db.select().from(schema.orders).where(eq(schema.orders.id, ids.measuring));
  const [sample] = await db
    .insert(schema.samples)
    .values({
      requestId: order.requestId,
      label: "Si standard",
      formula: "Si",
      crystalSystem: "cubic",
      centering: "F",
      cellA: 5.431,
      cellB: 5.431,
      cellC: 5.431,
    })
    .returning();
  ids.measuringSample = sample.id;
  for (const [to, mover] of [
    ["samples_in_transit", "client"],
    ["samples_received", "lab"],
    ["measuring", "lab"],
  ] as const) {
    await db.transaction(async (tx) => w.app.orders.moveOrder(tx, await w.app.orders.lockOrder(tx, ids.measuring), to, mover, null));
  }

  const token = await callRoute(app.tokens.action, formRequest("/lab/api-tokens", { intent: "create", name: "Diffractometer PC" }, await as(LAB)));
  ids.apiToken = (token.body as { created: { token: string } }).created.token;

  // The measuring order's data room already holds as many live share links as one order may have.
  for (let i = 1; i <= SHARE_LINK_MAX_LIVE; i++) {
    await app.shareLinks.createShareLink({
      orderId: ids.measuring,
      organisationId: w.halvorsen.id,
      userId: w.owner.id,
      label: `Reader ${i}`,
      expiresAt: new Date(Date.now() + 7 * 86_400_000),
    });
  }

  // A lab that has just signed up, for its vetting application.
  const lab = await callRoute(
    app.createAccount.action,
    formRequest("/create-account", {
      kind: "lab",
      name: "Tamsin Oyelaran-Kerr",
      email: "manager@quarrybend.example",
      password: "quarry-bend-password",
      organisationName: "Quarry Bend X-ray",
      city: "Stillwater Reach",
      country: "Iceland",
    }),
  );
  expect(lab.status).toBe(302);
  ids.vettingCookie = cookieFrom(lab)!;
  ids.vettingLab = (await db.select().from(schema.organisations).where(eq(schema.organisations.name, "Quarry Bend X-ray")))[0].id;

  // One provider event, delivered once; the replay case delivers it again.
  const event = {
    id: "evt_bad_input_replay",
    object: "event",
    type: "checkout.session.completed",
    created: Math.floor(Date.now() / 1000),
    data: { object: { id: ids.sessionId, object: "checkout.session" } },
  };
  signedWebhook.raw = JSON.stringify(event);
  signedWebhook.header = signed(signedWebhook.raw);
  const first = await callRoute(app.webhook.action, webhookRequest(signedWebhook.raw, signedWebhook.header));
  expect(first.body).toEqual({ received: true, duplicate: false });
});

afterAll(async () => {
  await app?.boss.stopBoss();
  await w?.close();
});

// ───────────── the corpus ─────────────

interface Case {
  /** The kind of bad input; the corpus needs at least 25 different kinds. */
  kind: string;
  what: string;
  send: () => Promise<RouteAnswer>;
  status: number;
  /** The sentence the person (or the calling program) is shown. */
  says: RegExp;
  /** Tables a refusal writes to on purpose, each with its reason in the case's comment. */
  writes?: string[];
  /** Checked after the answer, for cases whose refusal is recorded (a rejected upload). */
  afterwards?: () => Promise<void>;
}

const form =
  (fn: keyof typeof app, path: string, fields: Record<string, string>, who: string | null, params: Record<string, string> = {}) =>
  async () =>
    // biome-ignore lint/suspicious/noExplicitAny: the route table is indexed by a key union whose action types differ
    callRoute((app[fn] as any).action, formRequest(path, fields, who ? await as(who) : undefined), params);
const samplesForm = (extra: Record<string, string>) => form("samples", "/client/requests/new", { ...NEW_REQUEST, ...extra }, CLIENT);
const hazardsForm = (extra: Record<string, string>) => async () =>
  callRoute(
    app.hazards.action,
    formRequest(
      `/client/requests/${ids.draft}/edit/hazards`,
      { "samples[0].id": ids.draftSample, "samples[0].afterMeasurement": "return", ...extra },
      await as(CLIENT),
    ),
    { id: ids.draft },
  );
const measurementForm = (extra: Record<string, string>) => async () =>
  callRoute(app.measurement.action, formRequest(`/client/requests/${ids.draft}/edit/measurement`, { ...MEASUREMENT, ...extra }, await as(CLIENT)), {
    id: ids.draft,
  });
const quoteForm = (extra: Record<string, string>) => async () =>
  callRoute(app.labRequest.action, formRequest(`/lab/requests/${ids.openRequest}`, quoteFields(extra), await as(LAB)), { id: ids.openRequest });
const priceForm = (extra: Record<string, string>) => form("priceList", "/lab/price-list", { ...PRICE_LIST, ...extra }, LAB);
const apiGet =
  (fn: "apiLabs" | "apiOrders", path: string, who: string | null = null) =>
  async () =>
    callRoute(app[fn].loader, getRequest(path, who ? await as(who) : undefined));
const labUploadStart = (body: string) => async () =>
  callRoute(app.uploads.action, jsonRequest(`/lab/orders/${ids.measuring}/uploads`, body, { Cookie: await as(LAB) }), { id: ids.measuring });
const v1Start =
  (body: string, token = () => ids.apiToken) =>
  async () =>
    callRoute(app.v1Start.action, jsonRequest(`/api/v1/orders/${ids.measuring}/files`, body, { Authorization: `Bearer ${token()}` }), { id: ids.measuring });
const sdsTarget = (fields: Record<string, string>) => async () =>
  callRoute(app.sdsUpload.action, formRequest(`/client/requests/${ids.draft}/sds-upload`, { intent: "upload-target", ...fields }, await as(CLIENT)), {
    id: ids.draft,
  });
const vettingTarget = (fields: Record<string, string>) => async () =>
  callRoute(app.vettingUpload.action, formRequest("/lab/vetting/upload", { intent: "upload-target", ...fields }, ids.vettingCookie));
const vettingWith = (tag: string, scan: string | Uint8Array, scanName?: string) => async () =>
  callRoute(app.vetting.action, formRequest("/lab/vetting", await putVettingFiles(tag, scan, scanName), ids.vettingCookie));
/** Completes an upload whose bytes are bad; the row is kept as `rejected` (the record of the refusal), nothing else changes. */
const rejectedScan = (name: string, bytes: string | Uint8Array, says: RegExp): Pick<Case, "send" | "afterwards" | "writes"> => {
  let fileId = "";
  return {
    writes: ["order_files"],
    send: async () => {
      // Starting the upload is a legitimate step of its own; the case is what `complete` makes of the bytes.
      fileId = await startedUpload(name, bytes);
      return callRoute(
        app.upload.action,
        jsonRequest(`/lab/orders/${ids.measuring}/uploads/${fileId}`, JSON.stringify({ intent: "complete", sha256: sha256(bytes) }), { Cookie: await as(LAB) }),
        { id: ids.measuring, fileId },
      );
    },
    afterwards: async () => {
      const [row] = await w.db.select().from(w.schema.orderFiles).where(w.eq(w.schema.orderFiles.id, fileId));
      expect(row).toMatchObject({ state: "rejected", rejectReason: expect.stringMatching(says) });
      expect(await w.orderState(ids.measuring)).toBe("measuring");
    },
  };
};
const event = (fields: Record<string, unknown>) =>
  JSON.stringify({ id: `evt_bad_${Math.random().toString(36).slice(2, 10)}`, object: "event", created: 1_767_225_600, ...fields });

const LONG = "x".repeat(100_000);
const SCRIPT = '<script>alert("owned")</script><img src=x onerror=alert(1)>';
const SQL = "' OR '1'='1'; DROP TABLE users; --";

const CASES: Case[] = [
  // Forms: sign-in and create account.
  {
    kind: "missing field",
    what: "sign-in without an e-mail",
    send: form("signIn", "/sign-in", { password: PASSWORD }, null),
    status: 400,
    says: /Enter your e-mail address\./,
  },
  {
    kind: "malformed e-mail",
    what: "create account with an address that is not one",
    send: form(
      "createAccount",
      "/create-account",
      { kind: "client", name: "Ada Quill", email: "ada at quill", password: "long-enough-password", organisationName: "Quill Labs" },
      null,
    ),
    status: 400,
    says: /Enter a valid e-mail address\./,
  },
  {
    kind: "SQL metacharacters",
    what: "sign-in with an injection as the e-mail",
    send: form("signIn", "/sign-in", { email: SQL, password: PASSWORD }, null),
    status: 400,
    says: /Enter a valid e-mail address\./,
  },
  {
    kind: "SQL metacharacters",
    what: "sign-in with an injection as the password",
    send: form("signIn", "/sign-in", { email: CLIENT, password: SQL }, null),
    status: 400,
    says: /The e-mail or password is not/,
    writes: ["sign_in_attempts"],
  },
  {
    kind: "very long string",
    what: "a 100,000-character password at sign-in",
    send: form("signIn", "/sign-in", { email: CLIENT, password: LONG }, null),
    status: 400,
    says: /at most 200 characters/,
  },
  {
    kind: "very long string",
    what: "a 100,000-character name when creating an account",
    send: form(
      "createAccount",
      "/create-account",
      { kind: "client", name: LONG, email: "long@quill.example", password: "long-enough-password", organisationName: "Quill Labs" },
      null,
    ),
    status: 400,
    says: /At most 120 characters\./,
  },
  {
    kind: "unknown enum value",
    what: "create account as a kind of organisation that does not exist",
    send: form(
      "createAccount",
      "/create-account",
      { kind: "broker", name: "Ada Quill", email: "ada@quill.example", password: "long-enough-password", organisationName: "Quill Labs" },
      null,
    ),
    status: 400,
    says: /Choose whether you buy measurements or run a lab\./,
  },
  {
    kind: "replayed form",
    what: "create account again with an address that already has one",
    send: form(
      "createAccount",
      "/create-account",
      {
        kind: "lab",
        name: "Tamsin Oyelaran-Kerr",
        email: "manager@quarrybend.example",
        password: "quarry-bend-password",
        organisationName: "Quarry Bend X-ray",
        city: "Stillwater Reach",
        country: "Iceland",
      },
      null,
    ),
    status: 400,
    says: /already/,
  },
  {
    kind: "NUL byte in text",
    what: "create account with a NUL character in the name",
    send: form(
      "createAccount",
      "/create-account",
      { kind: "client", name: "Ada\u0000Quill", email: "nul@quill.example", password: "long-enough-password", organisationName: "Quill Labs" },
      null,
    ),
    status: 400,
    says: /NUL character/,
  },
  {
    kind: "NUL byte in text",
    what: "a lab profile address (slug) with a NUL character",
    send: async () => callRoute(app.labProfile.loader, getRequest("/labs/%00"), { slug: "\u0000" }),
    status: 404,
    says: /No approved lab is listed at this address\./,
  },

  // Forms: the request wizard.
  {
    kind: "NUL byte in text",
    what: "a sample label with a NUL character",
    send: samplesForm({ "samples[0].label": "LFP\u0000-12" }),
    status: 400,
    says: /NUL/,
  },
  {
    kind: "NUL byte in text",
    what: "a directory search with a NUL character",
    send: apiGet("apiLabs", "/api/labs?q=Granite%00"),
    status: 400,
    says: /NUL|character/,
  },
  {
    kind: "NUL byte in text",
    what: "an upload named with a NUL character",
    send: labUploadStart(JSON.stringify({ name: "scan\u0000.xy", size: 10, kind: "scan" })),
    status: 400,
    says: /NUL|character|name/,
  },
  {
    kind: "invalid chemical formula",
    what: "a formula with an element that does not exist",
    send: samplesForm({ "samples[0].formula": "LiXxPO4" }),
    status: 400,
    says: /“Xx” .* is not an element symbol/,
  },
  {
    kind: "invalid chemical formula",
    what: "a formula with unbalanced brackets",
    send: samplesForm({ "samples[0].formula": "Ca(OH2" }),
    status: 400,
    says: /bracket|parenthes/i,
  },
  {
    kind: "cell inconsistent with its system",
    what: "a cubic cell with a ≠ b",
    send: samplesForm({ "samples[0].crystalSystem": "cubic", "samples[0].centering": "F" }),
    status: 400,
    says: /A cubic cell needs a = b = c/,
  },
  {
    kind: "negative number",
    what: "a negative sample mass",
    send: samplesForm({ "samples[0].massMg": "-400" }),
    status: 400,
    says: /The mass must be positive\./,
  },
  { kind: "zero", what: "a cell edge of zero", send: samplesForm({ "samples[0].cellA": "0" }), status: 400, says: /A must be positive\./ },
  {
    kind: "non-numeric number",
    what: "a mass written in words",
    send: samplesForm({ "samples[0].massMg": "four hundred" }),
    status: 400,
    says: /Enter the mass as a number \(mg\)\./,
  },
  {
    kind: "non-finite number",
    what: "a cell edge of Infinity and a mass of NaN",
    send: samplesForm({ "samples[0].cellA": "Infinity", "samples[0].massMg": "NaN" }),
    status: 400,
    says: /Enter a as a number \(Å\)\..*Enter the mass as a number|Enter the mass as a number.*Enter a as a number/,
  },
  { kind: "huge number", what: "a sample mass of 1e300 mg", send: samplesForm({ "samples[0].massMg": "1e300" }), status: 400, says: /At most 1 kg/ },
  {
    kind: "unknown enum value",
    what: "a technique that does not exist",
    send: samplesForm({ technique: "xray_magic" }),
    status: 400,
    says: /Choose the technique\./,
  },
  {
    kind: "too many items",
    what: "21 samples in one request",
    send: samplesForm(Object.fromEntries(Array.from({ length: 21 }, (_, i) => Object.entries(SAMPLE).map(([k, v]) => [k.replace("[0]", `[${i}]`), v])).flat())),
    status: 400,
    says: /At most 20 samples per request\./,
  },
  {
    kind: "unknown H-statement",
    what: "an H-code that no regulation defines",
    send: hazardsForm({ "samples[0].hStatements": "H315, H999" }),
    status: 400,
    says: /H999/,
  },
  {
    kind: "unknown GHS pictogram",
    what: "a GHS10 pictogram",
    send: hazardsForm({ "samples[0].ghs": "GHS10" }),
    status: 400,
    says: /Choose pictograms from GHS01 to GHS09\./,
  },
  {
    kind: "non-numeric number",
    what: "a radioactive sample's activity as text",
    send: hazardsForm({
      "samples[0].special.radioactive.declared": "on",
      "samples[0].special.radioactive.details": "Sealed U3O8 reference",
      "samples[0].special.radioactive.activityBq": "lots",
    }),
    status: 400,
    says: /Give the activity as a number of becquerels \(Bq\)\./,
  },
  {
    kind: "negative number",
    what: "a negative activity in becquerels",
    send: hazardsForm({
      "samples[0].special.radioactive.declared": "on",
      "samples[0].special.radioactive.details": "Sealed U3O8 reference",
      "samples[0].special.radioactive.activityBq": "-3000",
    }),
    status: 400,
    says: /The activity must be a positive number of becquerels\./,
  },
  {
    kind: "foreign id",
    what: "hazards for a sample that is not on the request",
    send: hazardsForm({ "samples[0].id": "00000000-0000-4000-8000-000000000000" }),
    status: 400,
    says: /not part of the request/,
  },
  {
    kind: "inverted range",
    what: "a measurement range whose upper end is below the lower",
    send: measurementForm({ rangeMin: "80", rangeMax: "20" }),
    status: 400,
    says: /The upper end must be above the lower end\./,
  },
  { kind: "out-of-range number", what: "2θ up to 200°", send: measurementForm({ rangeMax: "200" }), status: 400, says: /2θ lies below 180°\./ },
  {
    kind: "invalid date",
    what: "a deadline of 30 February",
    send: measurementForm({ deadline: "2031-02-30" }),
    status: 400,
    says: /Enter the deadline as a date\./,
  },
  {
    kind: "date in the past",
    what: "a deadline that has passed",
    send: measurementForm({ deadline: "2020-01-01" }),
    status: 400,
    says: /The deadline must be in the future\./,
  },
  { kind: "huge number", what: "a budget of 999,999,999.00", send: measurementForm({ budget: "999999999.00" }), status: 400, says: /budget/i },
  {
    kind: "non-numeric number",
    what: "temperature points with words and negatives",
    send: measurementForm({ temperaturePoints: "298, hot, -5" }),
    status: 400,
    says: /Temperatures are kelvin between 0 and 3000; “hot, -5” is not\./,
  },
  {
    kind: "unknown enum value",
    what: "an atmosphere that is not offered",
    send: measurementForm({ atmosphere: "plasma" }),
    status: 400,
    says: /Choose the atmosphere\./,
  },
  {
    kind: "malformed id list",
    what: "inviting labs by ids that are not uuids",
    send: async () =>
      callRoute(
        app.labsStep.action,
        formRequest(`/client/requests/${ids.draft}/edit/labs`, { visibility: "invited", invitedLabIds: "1 OR 1=1" }, await as(CLIENT)),
        { id: ids.draft },
      ),
    status: 400,
    says: /lab/i,
  },

  // Forms: the quote builder, the price list, capabilities, order moves, disputes.
  {
    kind: "non-numeric number",
    what: "a quote quantity in words",
    send: quoteForm({ "items[0].quantity": "two" }),
    status: 400,
    says: /Enter the quantity as a whole number\./,
  },
  { kind: "zero", what: "a quote line of quantity 0", send: quoteForm({ "items[0].quantity": "0" }), status: 400, says: /The quantity is at least 1\./ },
  {
    kind: "negative number",
    what: "a negative unit price",
    send: quoteForm({ "items[0].unitPrice": "-180.00" }),
    status: 400,
    says: /Enter the unit price as an amount such as 180 or 180\.50\./,
  },
  {
    kind: "huge number",
    what: "a quote whose total does not fit",
    send: quoteForm({ "items[0].quantity": "1000", "items[0].unitPrice": "999999999.99" }),
    status: 400,
    says: /too large|at most/i,
  },
  {
    kind: "malformed id",
    what: "a quote on an instrument id that is not a uuid",
    send: quoteForm({ instrumentId: "'; DELETE FROM instruments; --" }),
    status: 400,
    says: /Choose the instrument\./,
  },
  { kind: "replayed form", what: "sending the same quote again", send: quoteForm({}), status: 400, says: /already has a quote on this request/ },
  {
    kind: "negative number",
    what: "a negative price per sample",
    send: priceForm({ "perSample.powder_reflection": "-5" }),
    status: 400,
    says: /Prices cannot be negative\./,
  },
  { kind: "zero", what: "a price per sample of 0", send: priceForm({ "perSample.powder_reflection": "0" }), status: 400, says: /must be more than 0\./ },
  {
    kind: "huge number",
    what: "a price per sample of 999,999,999.99",
    send: priceForm({ "perSample.powder_reflection": "999999999.99" }),
    status: 400,
    says: /price|amount/i,
  },
  {
    kind: "unknown enum value",
    what: "a currency that is not offered",
    send: priceForm({ currency: "XBT" }),
    status: 400,
    says: /Choose a currency from the list\./,
  },
  {
    kind: "unknown enum value",
    what: "an instrument with an anode that does not exist",
    send: form("capabilities", "/lab/capabilities", { ...INSTRUMENT, anode: "Unobtainium" }, LAB),
    status: 400,
    says: /Choose an anode from the list\./,
  },
  {
    kind: "negative number",
    what: "an instrument with a negative step",
    send: form("capabilities", "/lab/capabilities", { ...INSTRUMENT, smallestStep: "-0.01" }, LAB),
    status: 400,
    says: /The step must be more than 0°\./,
  },
  {
    kind: "unknown intent",
    what: "a capabilities form with an intent nobody handles",
    send: form("capabilities", "/lab/capabilities", { intent: "drop-everything" }, LAB),
    status: 400,
    says: /This form cannot be handled here\./,
  },
  {
    kind: "unknown intent",
    what: "an order form with an intent nobody handles",
    send: async () =>
      callRoute(app.clientOrder.action, formRequest(`/client/orders/${ids.fundsHeld}`, { intent: "refund-me" }, await as(CLIENT)), { id: ids.fundsHeld }),
    status: 400,
    says: /Choose|intent|action/i,
  },
  {
    kind: "replayed form",
    what: "marking the same parcel shipped twice",
    send: async () =>
      callRoute(
        app.clientOrder.action,
        formRequest(`/client/orders/${ids.shipped}`, { intent: "ship", carrier: "Nordpost", trackingNumber: "NP 4471 2290" }, await as(CLIENT)),
        { id: ids.shipped },
      ),
    status: 409,
    says: /in transit|cannot|already/i,
  },
  {
    kind: "replayed form",
    what: "opening the same dispute twice",
    send: async () =>
      callRoute(
        app.clientOrder.action,
        formRequest(`/client/orders/${ids.delivered}`, { intent: "dispute", reason: "The scans cover 10–60° 2θ, not the 10–90° quoted." }, await as(CLIENT)),
        { id: ids.delivered },
      ),
    status: 409,
    says: /dispute|cannot|already/i,
  },
  {
    kind: "replayed form",
    what: "accepting a quote that was already accepted",
    send: async () =>
      callRoute(
        app.clientRequest.action,
        formRequest(`/client/requests/${ids.awardedRequest}`, { intent: "accept", quoteId: ids.acceptedQuote }, await as(CLIENT)),
        { id: ids.awardedRequest },
      ),
    status: 400,
    says: /already accepted this quote/,
  },
  {
    kind: "replayed form",
    what: "paying an order that is already paid",
    send: async () =>
      callRoute(app.clientOrder.action, formRequest(`/client/orders/${ids.fundsHeld}`, { intent: "pay" }, await as(CLIENT)), { id: ids.fundsHeld }),
    status: 409,
    says: /already paid/,
  },
  {
    kind: "too short text",
    what: "a dispute reason of two letters",
    send: async () =>
      callRoute(app.clientOrder.action, formRequest(`/client/orders/${ids.delivered}`, { intent: "dispute", reason: "no" }, await as(CLIENT)), {
        id: ids.delivered,
      }),
    status: 400,
    says: /at least 10 characters/,
  },
  {
    kind: "too short text",
    what: "refusing a parcel without a reason",
    send: async () =>
      callRoute(app.labOrder.action, formRequest(`/lab/orders/${ids.shipped}`, { intent: "refuse", reason: "" }, await as(LAB)), { id: ids.shipped }),
    status: 400,
    says: /refused/,
  },

  // API parameters.
  {
    kind: "unknown enum value",
    what: "GET /api/labs?technique=alchemy",
    send: apiGet("apiLabs", "/api/labs?technique=alchemy"),
    status: 400,
    says: /technique must be one of/,
  },
  {
    kind: "non-numeric number",
    what: "GET /api/labs?page=two",
    send: apiGet("apiLabs", "/api/labs?page=two"),
    status: 400,
    says: /page must be a whole number\./,
  },
  { kind: "negative number", what: "GET /api/labs?page=-1", send: apiGet("apiLabs", "/api/labs?page=-1"), status: 400, says: /page starts at 1\./ },
  {
    kind: "huge number",
    what: "GET /api/labs?temperatureK=1e308",
    send: apiGet("apiLabs", "/api/labs?temperatureK=1e308"),
    status: 400,
    says: /temperatureK must be greater than 0 and at most 5000\./,
  },
  {
    kind: "unknown parameter",
    what: "GET /api/labs?sort=price",
    send: apiGet("apiLabs", "/api/labs?sort=price"),
    status: 400,
    says: /Unknown parameter "sort"\./,
  },
  {
    kind: "very long string",
    what: "GET /api/labs with a 10,000-character search",
    send: apiGet("apiLabs", `/api/labs?q=${"a".repeat(10_000)}`),
    status: 400,
    says: /q has at most 100 characters\./,
  },
  {
    kind: "unknown enum value",
    what: "GET /api/orders?state=shipped",
    send: apiGet("apiOrders", "/api/orders?state=shipped", CLIENT),
    status: 400,
    says: /Unknown state "shipped"/,
  },
  {
    kind: "malformed id",
    what: "GET /api/requests/:id/matches with a non-uuid id",
    send: async () => callRoute(app.matches.loader, getRequest("/api/requests/1%20OR%201=1/matches", await as(CLIENT)), { id: "1 OR 1=1" }),
    status: 404,
    says: /No such request in your organisation\./,
  },
  {
    kind: "malformed id",
    what: "GET /api/orders/:id with an id one character short of a uuid",
    send: async () => callRoute(app.apiOrder.loader, getRequest("/api/orders/x", await as(CLIENT)), { id: "0000000-0000-4000-8000-000000000000" }),
    status: 404,
    says: /order/i,
  },
  {
    kind: "bad credential",
    what: "the token API with a made-up token",
    send: v1Start(JSON.stringify({ name: "a.xy", size: 10 }), () => "dfy_made_up_token"),
    status: 401,
    says: /token/i,
  },
  {
    kind: "malformed JSON",
    what: "the token API with a JSON body cut off",
    send: v1Start('{"name": "scan.xy", "size": 12'),
    status: 400,
    says: /Send a JSON object\./,
  },
  { kind: "JSON of the wrong shape", what: "the token API with a JSON array", send: v1Start("[1, 2, 3]"), status: 400, says: /Send a JSON object\./ },
  {
    kind: "malformed JSON",
    what: "marking notifications read with a body that is not JSON",
    send: async () => callRoute(app.notifications.action, jsonRequest("/api/notifications", "{all: yes}", { Cookie: await as(CLIENT) })),
    status: 400,
    says: /Send \{"all": true\} or \{"ids": \[notification ids\]\}\./,
  },
  {
    kind: "malformed id",
    what: "marking notifications read by ids that are not uuids",
    send: async () =>
      callRoute(
        app.notifications.action,
        jsonRequest("/api/notifications", JSON.stringify({ ids: ["1; DROP TABLE notifications"] }), { Cookie: await as(CLIENT) }),
      ),
    status: 400,
    says: /Send \{"all": true\}/,
  },

  // Uploads: presign and complete.
  {
    kind: "wrong file type",
    what: "a scan upload named .exe",
    send: labUploadStart(JSON.stringify({ name: "scan.exe", size: 100, kind: "scan" })),
    status: 400,
    says: /text scan file/,
  },
  {
    kind: "zero-byte upload",
    what: "a scan upload of 0 bytes",
    send: labUploadStart(JSON.stringify({ name: "empty.xy", size: 0, kind: "scan" })),
    status: 400,
    says: /The file is empty\./,
  },
  {
    kind: "oversized declared size",
    what: "a scan upload of 3 GB",
    send: labUploadStart(JSON.stringify({ name: "huge.xy", size: 3e9, kind: "scan" })),
    status: 413,
    says: /limit is 2 GB/,
  },
  {
    kind: "negative number",
    what: "a scan upload of -1 bytes",
    send: labUploadStart(JSON.stringify({ name: "neg.xy", size: -1, kind: "scan" })),
    status: 400,
    says: /Give the file's size in bytes, as a whole number\./,
  },
  {
    kind: "non-numeric number",
    what: "a scan upload whose size is 1.5 bytes",
    send: labUploadStart(JSON.stringify({ name: "frac.xy", size: 1.5, kind: "scan" })),
    status: 400,
    says: /as a whole number/,
  },
  {
    kind: "unknown enum value",
    what: "an upload of kind spectrum",
    send: labUploadStart(JSON.stringify({ name: "x.xy", size: 10, kind: "spectrum" })),
    status: 400,
    says: /The kind must be one of/,
  },
  {
    kind: "path in a file name",
    what: "an upload named ../../etc/passwd.xy",
    send: labUploadStart(JSON.stringify({ name: "../../etc/passwd.xy", size: 10, kind: "scan" })),
    status: 400,
    says: /without folders/,
  },
  {
    kind: "malformed checksum",
    what: "an upload with a SHA-256 that is not hexadecimal",
    send: labUploadStart(JSON.stringify({ name: "x.xy", size: 10, kind: "scan", sha256: "z".repeat(64) })),
    status: 400,
    says: /64 hexadecimal characters/,
  },
  {
    kind: "wrong file type",
    what: "a safety data sheet that is a PNG",
    send: sdsTarget({ fileName: "sds.png", size: "2048", type: "image/png" }),
    status: 400,
    says: /PDF/,
  },
  {
    kind: "zero-byte upload",
    what: "a safety data sheet of 0 bytes",
    send: sdsTarget({ fileName: "sds.pdf", size: "0", type: "application/pdf" }),
    status: 400,
    says: /empty/,
  },
  {
    kind: "oversized declared size",
    what: "a 500 MB safety data sheet",
    send: sdsTarget({ fileName: "sds.pdf", size: String(500 * 1024 * 1024), type: "application/pdf" }),
    status: 400,
    says: /limit is/,
  },
  {
    kind: "unknown enum value",
    what: "a vetting upload for a purpose that does not exist",
    send: vettingTarget({ purpose: "bank_statement", fileName: "x.pdf", size: "100", type: "application/pdf" }),
    status: 400,
    says: /This upload is not part of a vetting application\./,
  },
  {
    kind: "non-numeric number",
    what: "a vetting upload whose size is not a number",
    send: vettingTarget({ purpose: "accreditation_certificate", fileName: "cert.pdf", size: "big", type: "application/pdf" }),
    status: 400,
    says: /size/i,
  },
  {
    kind: "path climbing out of a storage key",
    what: "a safety data sheet key that starts with the request's folder and climbs into another organisation's with ../",
    send: async () => {
      // Another organisation's data sheet, stored where the app's own upload would have put it.
      const theirs = `requests/${w.granite.id}/${randomUUID()}/sds/${randomUUID()}/their-sheet.pdf`;
      await app.storage.putObject(theirs, PDF, "application/pdf");
      const ours = app.requests.sdsPrefix({ id: ids.draft, organisationId: w.halvorsen.id });
      return hazardsForm({
        "samples[0].ghs": "GHS07",
        "samples[0].sdsStorageKey": `${ours}/../../../${theirs.slice("requests/".length)}`,
        "samples[0].sdsFileName": "sheet.pdf",
        "samples[0].sdsSha256": sha256(PDF),
      })();
    },
    status: 400,
    says: /Upload the safety data sheet on this page\./,
  },
  {
    kind: "path climbing out of a storage key",
    what: "a vetting certificate key that starts with the lab's folder and climbs into another lab's with ../",
    send: async () => {
      const fields = await putVettingFiles("climb-certificate", siliconScan());
      const theirs = `labs/${w.granite.id}/vetting/${randomUUID()}/accreditation.pdf`;
      await app.storage.putObject(theirs, PDF, "application/pdf");
      const certificateKey = `${app.labs.vettingPrefix(ids.vettingLab)}/../../${theirs.slice("labs/".length)}`;
      return callRoute(app.vetting.action, formRequest("/lab/vetting", { ...fields, certificateKey }, ids.vettingCookie));
    },
    status: 400,
    says: /Upload the accreditation certificate again\./,
  },
  {
    kind: "path climbing out of a storage key",
    what: "a vetting calibration scan key that climbs into another lab's folder with ../",
    send: async () => {
      const fields = await putVettingFiles("climb-scan", siliconScan());
      const scan = siliconScan();
      const theirs = `labs/${w.granite.id}/vetting/${randomUUID()}/si-640c.xy`;
      await app.storage.putObject(theirs, scan, "text/plain");
      const scanKey = `${app.labs.vettingPrefix(ids.vettingLab)}/../../${theirs.slice("labs/".length)}`;
      return callRoute(app.vetting.action, formRequest("/lab/vetting", { ...fields, scanKey, scanSha256: sha256(scan) }, ids.vettingCookie));
    },
    status: 400,
    says: /Upload the calibration scan again\./,
  },
  {
    kind: "control character in a file name",
    what: "an upload named with CR/LF, which would end the download's header line",
    send: async () => labUploadStart(JSON.stringify({ name: "scan\r\nX-Injected: yes.xy", size: 10, kind: "scan", sampleId: ids.measuringSample }))(),
    status: 400,
    says: /The file name contains a control character/,
  },
  {
    kind: "control character in a file name",
    what: "an instrument computer's upload named with CR/LF",
    send: async () => v1Start(JSON.stringify({ name: "scan\r\n.xy", size: 10, kind: "scan", sampleId: ids.measuringSample }))(),
    status: 400,
    says: /The file name contains a control character/,
  },
  {
    kind: "control character in a file name",
    what: "a safety data sheet named with a line feed",
    send: sdsTarget({ fileName: "sheet\n.pdf", size: "2048", type: "application/pdf" }),
    status: 400,
    says: /The file name contains a control character/,
  },
  {
    kind: "control character in a file name",
    what: "the hazards form naming an uploaded safety data sheet with CR/LF",
    send: async () => {
      const key = `${app.requests.sdsPrefix({ id: ids.draft, organisationId: w.halvorsen.id })}/${randomUUID()}/sheet.pdf`;
      await app.storage.putObject(key, PDF, "application/pdf");
      return hazardsForm({
        "samples[0].ghs": "GHS07",
        "samples[0].sdsStorageKey": key,
        "samples[0].sdsFileName": "sheet\r\n.pdf",
        "samples[0].sdsSha256": sha256(PDF),
      })();
    },
    status: 400,
    says: /The file name contains a control character/,
  },
  {
    kind: "control character in a file name",
    what: "a vetting application naming its certificate with CR/LF",
    send: async () =>
      callRoute(
        app.vetting.action,
        formRequest("/lab/vetting", { ...(await putVettingFiles("crlf-name", siliconScan())), certificateName: "accreditation\r\n.pdf" }, ids.vettingCookie),
      ),
    status: 400,
    says: /The file name contains a control character/,
  },
  {
    kind: "too many items",
    what: "a 21st live share link on one order",
    send: async () =>
      callRoute(
        app.dataRoomOrder.action,
        formRequest(`/client/data-room/${ids.measuring}`, { intent: "share", label: "One reader too many", days: "7" }, await as(CLIENT)),
        { orderId: ids.measuring },
      ),
    status: 400,
    says: /at most 20 live share links/,
  },
  {
    kind: "binary junk as a scan",
    what: "4 kB of binary bytes named .xy",
    // Scans are read at the upload, so the refusal is the scan reader's sentence (binary scan formats are accepted).
    ...rejectedScan(
      "junk.xy",
      new Uint8Array(4096).map((_, i) => (i * 37) % 256),
      /^The file is binary and in no scan format Diffractory reads/,
    ),
    status: 422,
    says: /The file is binary and in no scan format Diffractory reads/,
  },
  {
    kind: "malformed scan file",
    what: "a calibration xy file cut off after its header",
    send: vettingWith("truncated-xy", SCAN_FILES.truncatedXy),
    status: 400,
    says: /The calibration scan could not be checked: The file has only comments and no data rows\./,
  },
  {
    kind: "malformed scan file",
    what: "a calibration scan that is prose",
    send: vettingWith("prose", SCAN_FILES.textAsXy),
    status: 400,
    says: /The calibration scan could not be checked: .*(text|numeric)/,
  },
  {
    kind: "malformed CIF",
    what: "a calibration pdCIF whose loop stops mid-row",
    send: vettingWith("truncated-cif", SCAN_FILES.truncatedCif, "calibration.cif"),
    status: 400,
    says: /The CIF powder loop is truncated/,
  },
  {
    kind: "malformed CIF",
    what: "a calibration CIF with no powder pattern",
    send: vettingWith("cif-no-pattern", SCAN_FILES.cifWithoutPattern, "calibration.cif"),
    status: 400,
    says: /The CIF has no powder-pattern loop/,
  },
  {
    kind: "invalid UTF-8",
    what: "a calibration scan with bytes that are not UTF-8",
    send: vettingWith("latin1", INVALID_UTF8),
    status: 400,
    says: /UTF-8|not a text scan file|could not be checked/,
  },
  {
    kind: "malformed checksum",
    what: "completing an upload with a checksum of the wrong length",
    send: async () => {
      const fileId = await startedUpload("short-sum.xy", SCAN_FILES.truncatedXy);
      return callRoute(
        app.upload.action,
        jsonRequest(`/lab/orders/${ids.measuring}/uploads/${fileId}`, JSON.stringify({ intent: "complete", sha256: "abc" }), { Cookie: await as(LAB) }),
        { id: ids.measuring, fileId },
      );
    },
    status: 400,
    says: /Send the file's SHA-256 \(64 hexadecimal characters\)\./,
    writes: ["order_files"],
  },

  // The payment webhook.
  {
    kind: "missing signature",
    what: "a provider event without a signature",
    send: async () => callRoute(app.webhook.action, webhookRequest(signedWebhook.raw)),
    status: 400,
    says: /signature/,
  },
  {
    kind: "bad signature",
    what: "a provider event signed with another secret",
    send: async () =>
      callRoute(
        app.webhook.action,
        webhookRequest(
          event({ type: "checkout.session.completed", data: { object: { id: "cs_x", object: "checkout.session" } } }),
          Stripe.webhooks.generateTestHeaderString({ payload: "{}", secret: "whsec_someone_else" }),
        ),
      ),
    status: 400,
    says: /The webhook signature does not verify\./,
  },
  {
    kind: "malformed JSON",
    what: "a correctly signed event body that is not JSON",
    send: async () => callRoute(app.webhook.action, webhookRequest('{"id": "evt_cut', signed('{"id": "evt_cut'))),
    status: 400,
    says: /not JSON|could not be read/i,
  },
  {
    kind: "JSON of the wrong shape",
    what: "a signed event without an id or data object",
    send: async () => {
      const raw = JSON.stringify({ object: "event", type: "checkout.session.completed" });
      return callRoute(app.webhook.action, webhookRequest(raw, signed(raw)));
    },
    status: 400,
    says: /id|data/,
  },
  {
    kind: "NUL byte in text",
    what: "a signed event with a NUL character in a field",
    send: async () => {
      const raw = event({ type: "checkout.session.completed", data: { object: { id: "cs_\u0000", object: "checkout.session" } } });
      return callRoute(app.webhook.action, webhookRequest(raw, signed(raw)));
    },
    status: 400,
    says: /NUL/,
  },
  {
    kind: "replayed event",
    what: "an event id replayed with other content",
    send: async () => {
      const raw = signedWebhook.raw.replace("checkout.session.completed", "checkout.session.expired");
      return callRoute(app.webhook.action, webhookRequest(raw, signed(raw)));
    },
    status: 400,
    says: /An event with this id but other content was already received\./,
  },
];

describe("bad input is refused with a sentence and changes nothing", () => {
  it(`the corpus covers at least 25 kinds (${new Set(CASES.map((c) => c.kind)).size} kinds, ${CASES.length} cases)`, () => {
    expect(new Set(CASES.map((c) => c.kind)).size).toBeGreaterThanOrEqual(25);
  });

  for (const c of CASES) {
    it(`${c.kind}: ${c.what}`, async () => {
      const before = await snapshot();
      const answer = await c.send();
      const after = await snapshot();
      const text = shown(answer);
      expect(answer.status, text.slice(0, 500)).toBe(c.status);
      expect(text).toMatch(c.says);
      expect(changedTables(before, after).filter((t) => !(c.writes ?? []).includes(t))).toEqual([]);
      await c.afterwards?.();
    });
  }

  it("a replayed provider event is answered as a duplicate and posts nothing twice", async () => {
    const ledgerBefore = await w.db.select().from(w.schema.ledgerEntries);
    const answer = await callRoute(app.webhook.action, webhookRequest(signedWebhook.raw, signedWebhook.header));
    expect(answer.body).toEqual({ received: true, duplicate: true });
    expect(await w.db.select().from(w.schema.ledgerEntries)).toHaveLength(ledgerBefore.length);
  });

  it("a signed event of a type Diffractory does not use is acknowledged, says it was ignored, and changes no business table", async () => {
    const before = await snapshot();
    const raw = event({ type: "customer.created", data: { object: { id: "cus_123", object: "customer" } } });
    const answer = await callRoute(app.webhook.action, webhookRequest(raw, signed(raw)));
    expect(answer.status).toBe(200);
    expect(answer.body).toMatchObject({ received: true, ignored: expect.stringMatching(/customer\.created/) });
    // The receipt is kept (so a replay is recognised); nothing else moves.
    expect(changedTables(before, await snapshot())).toEqual(["webhook_events"]);
  });

  it("a scan whose comment lines are Latin-1, not UTF-8, is stored and checked: instrument software writes such headers", async () => {
    const text = Buffer.concat([
      Buffer.from([0x23, 0x20, 0x49, 0x6e, 0x74, 0x65, 0x6e, 0x73, 0x69, 0x74, 0xe4, 0x74, 0x20, 0xb0, 0x32, 0x3f, 0x0a]),
      Buffer.from(siliconScan()),
    ]);
    const fileId = await startedUpload("latin1-header.xy", text);
    const done = await callRoute(
      app.upload.action,
      jsonRequest(`/lab/orders/${ids.measuring}/uploads/${fileId}`, JSON.stringify({ intent: "complete", sha256: sha256(text) }), { Cookie: await as(LAB) }),
      { id: ids.measuring, fileId },
    );
    expect(done.status, JSON.stringify(done.body)).toBe(200);
    expect(await app.scanCheck.runScanCheck(fileId, { finalAttempt: true })).toMatchObject({ status: "done" });
  });

  it("malformed scan files delivered on an order are refused at the upload with a sentence, not an error page", async () => {
    // Scans are read when their upload completes: an unreadable one is refused then (422) with the reader's sentence.
    for (const [name, text, says] of [
      ["cut-off.xy", `${SCAN_FILES.truncatedXy}# more header\n`, /only comments and no data rows/],
      ["cut-off.cif", SCAN_FILES.truncatedCif, /CIF powder loop is truncated/],
    ] as const) {
      const fileId = await startedUpload(name, text);
      const done = await callRoute(
        app.upload.action,
        jsonRequest(`/lab/orders/${ids.measuring}/uploads/${fileId}`, JSON.stringify({ intent: "complete", sha256: sha256(text) }), { Cookie: await as(LAB) }),
        { id: ids.measuring, fileId },
      );
      expect(done.status, JSON.stringify(done.body)).toBe(422);
      expect(done.body).toMatchObject({ state: "rejected", error: expect.stringMatching(says) });
      const [row] = await w.db.select().from(w.schema.orderFiles).where(w.eq(w.schema.orderFiles.id, fileId));
      expect(row).toMatchObject({ state: "rejected", rejectReason: expect.stringMatching(says) });
      expect(await w.db.select().from(w.schema.scanChecks).where(w.eq(w.schema.scanChecks.fileId, fileId))).toEqual([]);
    }
    expect(await w.orderState(ids.measuring)).toBe("measuring");
  });
});

// redirectTo comes from the address a person was sent to sign in from, so anyone can write it into a link.
describe("a redirect target sent to sign-in is followed only to a path on this site", () => {
  const signInWith = (redirectTo: string, email = CLIENT) => callRoute(app.signIn.action, formRequest("/sign-in", { email, password: PASSWORD, redirectTo }));
  const sessionCount = async () => (await w.db.select({ id: w.schema.sessions.id }).from(w.schema.sessions)).length;

  it.each([
    // The reported attack, as sent: redirectTo=%2F%09%2Fevil.example%2F (browsers drop the tab and go to //evil.example/).
    ["a tab between the slashes", "/\t/evil.example/"],
    ["a backslash after the slash", "/\\evil.example"],
    ["a protocol-relative URL", "//evil.example/"],
    ["dot segments that leave //host behind", "/..//evil.example/"],
    ["an absolute URL", "https://evil.example/"],
    ["javascript:", "javascript:alert(1)"],
  ])("%s goes to the workspace instead", async (_what, redirectTo) => {
    const answer = await signInWith(redirectTo);
    expect(answer.status, shown(answer).slice(0, 300)).toBe(302);
    expect(answer.headers.get("location")).toBe("/client");
    expect(cookieFrom(answer)).toBeTruthy();
  });

  it("a CR in redirectTo is no 500 after the session row is written: one session, its cookie, the workspace", async () => {
    const before = await sessionCount();
    const answer = await signInWith("/\r/evil.example/");
    expect(answer.status, shown(answer).slice(0, 300)).toBe(302);
    expect(answer.headers.get("location")).toBe("/client");
    expect(cookieFrom(answer)).toBeTruthy();
    expect(await sessionCount()).toBe(before + 1);
  });

  it("a path on this site is followed in the form a browser reads it", async () => {
    expect((await signInWith("/client/orders?tab=open")).headers.get("location")).toBe("/client/orders?tab=open");
    expect((await signInWith("/labs?q=Zürich")).headers.get("location")).toBe("/labs?q=Z%C3%BCrich");
  });

  it("the second-factor step passes on only a checked target, and follows only a path on this site", async () => {
    const ADMIN = "admin@diffractory.example";
    const first = await signInWith("/\t/evil.example/", ADMIN);
    expect(first.headers.get("location")).toBe("/sign-in/code");
    const { freshTotpCode } = await import("./route-call");
    const [admin] = await w.db.select().from(w.schema.users).where(w.eq(w.schema.users.email, ADMIN));
    const { code } = await freshTotpCode(admin.totpSecret!, admin.totpLastStep);
    const { action: enterCode } = await import("~/routes/public/sign-in-code");
    const second = await callRoute(enterCode, formRequest("/sign-in/code", { intent: "verify", code, redirectTo: "/\t/evil.example/" }, cookieFrom(first)));
    expect(second.status, shown(second).slice(0, 300)).toBe(302);
    expect(second.headers.get("location")).toBe("/admin");
  });
});
