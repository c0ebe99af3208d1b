// A sample's further declared phases and acceptance window: entered in the request wizard, kept with the draft,
// refused with one sentence when wrong, shown on the order screens, and carried into the scan check's options.
import { and, asc, count, eq, inArray } from "drizzle-orm";
import { beforeAll, describe, expect, it } from "vitest";
import { windowText } from "~/components/request-parts";
import { db, schema } from "~/db/client.server";
import { seedDemo } from "~/demo/seed.server";
import { declaredCheckOptions } from "~/domain/check-result";
import { checkContext } from "~/models/checks/scan-check.server";
import { loader as clientOrderLoader } from "~/routes/client/order";
import { loader as reviewLoader } from "~/routes/client/request-review";
import { action as samplesAction, loader as samplesLoader } from "~/routes/client/request-samples";
import { loader as labOrderFilesLoader } from "~/routes/lab/order-files";
import { loader as labOrderLoader } from "~/routes/lab/order";
import { acceptedQuoteAndOrder } from "./order-fixtures";
import { callRoute, formRequest, getRequest, type RouteAnswer, sessionCookies } from "./route-call";

const as = sessionCookies();
const CLIENT = "owner@halvorsen.example";
const LAB = "lab@graniteridge.example";

// The declarations below are inputs, not computed values. Approximate cells from memory: anatase TiO2 (I4₁/amd)
// a 3.785, c 9.514 Å; rutile (P4₂/mnm) a 4.594, c 2.959 Å; brookite (Pbca) a 9.18, b 5.45, c 5.15 Å; silicon as an
// internal standard a 5.431 Å (NIST SRM 640 series, certificate value rounded).
const MAIN = {
  "samples[0].label": "TiO2-7",
  "samples[0].formula": "TiO2",
  "samples[0].form": "powder",
  "samples[0].massMg": "300",
  "samples[0].expectedPhase": "anatase TiO2",
  "samples[0].crystalSystem": "tetragonal",
  "samples[0].centering": "I",
  "samples[0].cellA": "3.785",
  "samples[0].cellB": "3.785",
  "samples[0].cellC": "9.514",
  "samples[0].cellAlpha": "90",
  "samples[0].cellBeta": "90",
  "samples[0].cellGamma": "90",
};

const phase = (prefix: string, p: { name?: string; system: string; centering: string; cell: number[] }) => {
  const [a, b, c, alpha, beta, gamma] = p.cell.map(String);
  return {
    ...(p.name === undefined ? {} : { [`${prefix}.name`]: p.name }),
    [`${prefix}.crystalSystem`]: p.system,
    [`${prefix}.centering`]: p.centering,
    [`${prefix}.cellA`]: a,
    [`${prefix}.cellB`]: b,
    [`${prefix}.cellC`]: c,
    [`${prefix}.cellAlpha`]: alpha,
    [`${prefix}.cellBeta`]: beta,
    [`${prefix}.cellGamma`]: gamma,
  };
};
const SILICON = { name: "Si standard", system: "cubic", centering: "F", cell: [5.431, 5.431, 5.431, 90, 90, 90] };
const RUTILE = { name: "rutile", system: "tetragonal", centering: "P", cell: [4.594, 4.594, 2.959, 90, 90, 90] };
const BROOKITE = { name: "brookite", system: "orthorhombic", centering: "P", cell: [9.18, 5.45, 5.15, 90, 90, 90] };

const DECLARED = {
  ...MAIN,
  ...phase("samples[0].phases[0]", SILICON),
  ...phase("samples[0].candidates[0]", RUTILE),
  ...phase("samples[0].candidates[1]", BROOKITE),
  "samples[0].window.a.plusMinus": "0.002",
  "samples[0].window.a.unit": "absolute",
  "samples[0].window.c.plusMinus": "0.3",
  "samples[0].window.c.unit": "percent",
  // A unit without an amount is no window.
  "samples[0].window.alpha.unit": "absolute",
};
const NEW = { title: "Anatase batch 7", technique: "powder_reflection", ...DECLARED };

const WINDOW = { a: { plusMinus: 0.002, unit: "absolute" }, c: { plusMinus: 0.3, unit: "percent" } };

function fieldErrors(answer: RouteAnswer) {
  return ((answer.body as { result: { error: Record<string, string[]> } }).result.error ?? {}) as Record<string, string[]>;
}
const requestCount = async () => (await db.select({ n: count() }).from(schema.requests))[0].n;

/** Everything the samples step writes for the request, to compare before and after a refused form. */
async function stored(requestId: string) {
  const [request] = await db.select().from(schema.requests).where(eq(schema.requests.id, requestId));
  const samples = await db.select().from(schema.samples).where(eq(schema.samples.requestId, requestId)).orderBy(asc(schema.samples.position));
  const phases = samples.length
    ? await db
        .select()
        .from(schema.samplePhases)
        .where(
          inArray(
            schema.samplePhases.sampleId,
            samples.map((s) => s.id),
          ),
        )
        .orderBy(asc(schema.samplePhases.role), asc(schema.samplePhases.position))
    : [];
  return { request: { ...request, updatedAt: null }, samples, phases };
}

let requestId = "";
let sampleId = "";
const editPath = () => `/client/requests/${requestId}/edit/samples`;

beforeAll(async () => {
  await seedDemo();
});

describe("further phases, candidates and the acceptance window in the request wizard", () => {
  it("saves an expected phase, two candidate forms and a window with the sample", async () => {
    const answer = await callRoute(samplesAction, formRequest("/client/requests/new", NEW, await as(CLIENT)));
    expect(answer.status).toBe(302);
    requestId = answer.headers.get("location")!.split("/")[3];
    const { samples, phases } = await stored(requestId);
    expect(samples).toHaveLength(1);
    sampleId = samples[0].id;
    expect(samples[0]).toMatchObject({ expectedPhase: "anatase TiO2", crystalSystem: "tetragonal", acceptanceWindow: WINDOW });
    // Ordered by role (candidate before expected) and position.
    expect(phases.map((p) => [p.role, p.position, p.name, p.crystalSystem, p.centering, p.cellA, p.cellC])).toEqual([
      ["candidate", 0, "rutile", "tetragonal", "P", 4.594, 2.959],
      ["candidate", 1, "brookite", "orthorhombic", "P", 9.18, 5.15],
      ["expected", 0, "Si standard", "cubic", "F", 5.431, 5.431],
    ]);
  });

  it("gives them back when the draft is resumed, and keeps them through a save", async () => {
    const cookie = await as(CLIENT);
    const resumed = await callRoute(samplesLoader, getRequest(editPath(), cookie), { id: requestId });
    const defaults = (resumed.body as { defaults: { samples: Record<string, unknown>[] } }).defaults.samples[0];
    expect(defaults.phases).toEqual([
      {
        name: "Si standard",
        crystalSystem: "cubic",
        centering: "F",
        cellA: "5.431",
        cellB: "5.431",
        cellC: "5.431",
        cellAlpha: "90",
        cellBeta: "90",
        cellGamma: "90",
      },
    ]);
    expect((defaults.candidates as { name: string }[]).map((c) => c.name)).toEqual(["rutile", "brookite"]);
    expect(defaults.window).toEqual({ a: { plusMinus: "0.002", unit: "absolute" }, c: { plusMinus: "0.3", unit: "percent" } });

    // Saving the step again as the form sends it (with the sample's id) keeps every row and the window.
    const before = await stored(requestId);
    const again = await callRoute(
      samplesAction,
      formRequest(editPath(), { title: "Anatase batch 7", technique: "powder_reflection", "samples[0].id": sampleId, ...DECLARED }, cookie),
      { id: requestId },
    );
    expect(again.status).toBe(302);
    const after = await stored(requestId);
    expect(after.samples[0].acceptanceWindow).toEqual(WINDOW);
    const strip = (rows: typeof before.phases) => rows.map(({ id: _id, ...p }) => p);
    expect(strip(after.phases)).toEqual(strip(before.phases));
  });

  it("drops a removed candidate and a cleared window on the next save", async () => {
    const cookie = await as(CLIENT);
    const answer = await callRoute(
      samplesAction,
      formRequest(
        editPath(),
        { title: "Anatase batch 7", technique: "powder_reflection", "samples[0].id": sampleId, ...MAIN, ...phase("samples[0].candidates[0]", BROOKITE) },
        cookie,
      ),
      { id: requestId },
    );
    expect(answer.status).toBe(302);
    const { samples, phases } = await stored(requestId);
    expect(samples[0].acceptanceWindow).toBeNull();
    expect(phases.map((p) => [p.role, p.name])).toEqual([["candidate", "brookite"]]);
    // Back to the full declaration for the tests below.
    const restored = await callRoute(
      samplesAction,
      formRequest(editPath(), { title: "Anatase batch 7", technique: "powder_reflection", "samples[0].id": sampleId, ...DECLARED }, cookie),
      { id: requestId },
    );
    expect(restored.status).toBe(302);
  });

  // Each bad input: the field that carries the sentence, and the sentence.
  const BAD: [string, Record<string, string>, string, RegExp][] = [
    [
      "a window on a parameter the system fixes",
      { "samples[0].window.alpha.plusMinus": "0.1" },
      "samples[0].window.alpha.plusMinus",
      /A tetragonal cell's symmetry fixes α, so it takes no window; set one on a, c instead\./,
    ],
    ["a window on b, which a tetragonal cell ties to a", { "samples[0].window.b.plusMinus": "0.01" }, "samples[0].window.b.plusMinus", /fixes b/],
    ["a negative window", { "samples[0].window.a.plusMinus": "-0.002" }, "samples[0].window.a.plusMinus", /The window on a must be a positive amount\./],
    ["a zero window", { "samples[0].window.a.plusMinus": "0" }, "samples[0].window.a.plusMinus", /positive amount/],
    [
      "a 15 % window",
      { "samples[0].window.c.plusMinus": "15", "samples[0].window.c.unit": "percent" },
      "samples[0].window.c.plusMinus",
      /A window is at most ± 10 %\./,
    ],
    ["a 2 Å window", { "samples[0].window.a.plusMinus": "2" }, "samples[0].window.a.plusMinus", /A window on a cell length is at most ± 1 Å\./],
    ["a window that is no number", { "samples[0].window.a.plusMinus": "tight" }, "samples[0].window.a.plusMinus", /Give the window on a as a number/],
    [
      "a candidate whose cell its system cannot have",
      phase("samples[0].candidates[1]", { name: "brookite", system: "tetragonal", centering: "P", cell: [9.18, 5.45, 5.15, 90, 90, 90] }),
      "samples[0].candidates[1].cellA",
      /A tetragonal cell needs a = b/,
    ],
    [
      "a candidate centering its system cannot have",
      phase("samples[0].candidates[0]", { ...RUTILE, centering: "F" }),
      "samples[0].candidates[0].centering",
      /A tetragonal lattice cannot have centering F/,
    ],
    [
      "five further expected phases",
      Object.assign({}, ...[0, 1, 2, 3, 4].map((i) => phase(`samples[0].phases[${i}]`, SILICON))),
      "samples[0].phases",
      /At most 4 further expected phases per sample\./,
    ],
    [
      "five candidate forms",
      Object.assign({}, ...[0, 1, 2, 3, 4].map((i) => phase(`samples[0].candidates[${i}]`, RUTILE))),
      "samples[0].candidates",
      /At most 4 candidate forms per sample\./,
    ],
    ["a phase name of 81 characters", { "samples[0].phases[0].name": "x".repeat(81) }, "samples[0].phases[0].name", /A phase name has at most 80 characters\./],
    ["a further phase without its system", { "samples[0].phases[0].crystalSystem": "" }, "samples[0].phases[0].crystalSystem", /Choose the crystal system\./],
  ];

  it.each(BAD)("refuses %s with one sentence and changes nothing", async (_what, spoil, field, sentence) => {
    const cookie = await as(CLIENT);
    const before = await stored(requestId);
    const requests = await requestCount();
    // On the saved draft…
    const edited = await callRoute(
      samplesAction,
      formRequest(editPath(), { title: "Anatase batch 7", technique: "powder_reflection", "samples[0].id": sampleId, ...DECLARED, ...spoil }, cookie),
      { id: requestId },
    );
    expect(edited.status).toBe(400);
    const errors = fieldErrors(edited);
    expect(errors[field]?.join(" ")).toMatch(sentence);
    // The one sentence, and no other field blamed.
    expect(errors[field]).toHaveLength(1);
    expect(Object.keys(errors)).toEqual([field]);
    expect(await stored(requestId)).toEqual(before);
    // …and on a new request, which is not created.
    const created = await callRoute(samplesAction, formRequest("/client/requests/new", { ...NEW, ...spoil }, cookie));
    expect(created.status).toBe(400);
    expect(fieldErrors(created)[field]?.join(" ")).toMatch(sentence);
    expect(await requestCount()).toBe(requests);
  });

  it("shows the declaration on the review step, the window in words", async () => {
    const answer = await callRoute(reviewLoader, getRequest(`/client/requests/${requestId}/edit/review`, await as(CLIENT)), { id: requestId });
    const [sample] = (answer.body as { samples: { acceptanceWindow: unknown; phases: { role: string; name: string }[] }[] }).samples;
    expect(sample.phases.map((p) => `${p.role} ${p.name}`)).toEqual(["expected Si standard", "candidate rutile", "candidate brookite"]);
    expect(windowText(sample.acceptanceWindow as never)).toBe("a ± 0.002 Å, c ± 0.3 %");
    expect(windowText(null)).toBe("none");
    expect(windowText({ beta: { plusMinus: 0.05, unit: "absolute" } })).toBe("β ± 0.05°");
  });
});

describe("the declaration on the order and in the scan check", () => {
  let orderId = "";

  beforeAll(async () => {
    // The draft becomes an order with Granite Ridge's Cu instrument (rows written directly, as in scan-checks.test.ts).
    const one = async <T>(rows: Promise<T[]>) => (await rows)[0];
    const granite = await one(db.select().from(schema.organisations).where(eq(schema.organisations.slug, "granite-ridge-characterisation")));
    const [request] = await db.update(schema.requests).set({ state: "awarded" }).where(eq(schema.requests.id, requestId)).returning();
    const instrument = await one(
      db
        .select()
        .from(schema.instruments)
        .where(and(eq(schema.instruments.labId, granite.id), eq(schema.instruments.anode, "Cu"))),
    );
    const { order } = await acceptedQuoteAndOrder({ requestId, clientOrganisationId: request.organisationId, labId: granite.id, instrumentId: instrument.id });
    orderId = order.id;
  });

  const ENGINE_OPTIONS = {
    system: "tetragonal",
    centering: "I",
    cell: { a: 3.785, b: 3.785, c: 9.514, alpha: 90, beta: 90, gamma: 90 },
    mainName: "anatase TiO2",
    phases: [{ name: "Si standard", system: "cubic", centering: "F", cell: { a: 5.431, b: 5.431, c: 5.431, alpha: 90, beta: 90, gamma: 90 } }],
    candidates: [
      { name: "rutile", system: "tetragonal", centering: "P", cell: { a: 4.594, b: 4.594, c: 2.959, alpha: 90, beta: 90, gamma: 90 } },
      { name: "brookite", system: "orthorhombic", centering: "P", cell: { a: 9.18, b: 5.45, c: 5.15, alpha: 90, beta: 90, gamma: 90 } },
    ],
    window: WINDOW,
  };

  it("the server's check context of the sample carries main name, expected phases, candidates and window", async () => {
    const context = await checkContext(orderId, sampleId);
    expect(context.declared).toEqual(ENGINE_OPTIONS);
    expect(context.declaredFrom.expectedPhase).toBe("anatase TiO2");
  });

  it("a sample without further phases or window gives the engine none of them", async () => {
    const [bare] = await db
      .insert(schema.samples)
      .values({
        requestId,
        position: 1,
        label: "TiO2-8",
        formula: "TiO2",
        expectedPhase: "anatase TiO2",
        crystalSystem: "tetragonal",
        centering: "I",
        cellA: 3.785,
        cellC: 9.514,
      })
      .returning();
    const context = await checkContext(orderId, bare.id);
    expect(context.declared).toEqual({
      system: "tetragonal",
      centering: "I",
      cell: { a: 3.785, b: 3.785, c: 9.514, alpha: 90, beta: 90, gamma: 90 },
      mainName: "anatase TiO2",
    });
    await db.delete(schema.samples).where(eq(schema.samples.id, bare.id));
  });

  it("the lab's delivery screen gives the browser preview the same declaration", async () => {
    const answer = await callRoute(labOrderFilesLoader, getRequest(`/lab/orders/${orderId}/files`, await as(LAB)), { id: orderId });
    const declarations = (answer.body as { declarations: Record<string, Parameters<typeof declaredCheckOptions>[0]> }).declarations;
    expect(declaredCheckOptions(declarations[sampleId])).toEqual(ENGINE_OPTIONS);
  });

  it("the lab's and the client's order screens load the further phases and the window", async () => {
    const lab = await callRoute(labOrderLoader, getRequest(`/lab/orders/${orderId}`, await as(LAB)), { id: orderId });
    const client = await callRoute(clientOrderLoader, getRequest(`/client/orders/${orderId}`, await as(CLIENT)), { id: orderId });
    for (const answer of [lab, client]) {
      const [sample] = (answer.body as { samples: { acceptanceWindow: unknown; phases: { role: string; name: string }[] }[] }).samples;
      expect(sample.phases.map((p) => `${p.role} ${p.name}`)).toEqual(["expected Si standard", "candidate rutile", "candidate brookite"]);
      expect(sample.acceptanceWindow).toEqual(WINDOW);
    }
  });
});
