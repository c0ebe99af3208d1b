// The demo of a published request's life (docs/design.md#the-requests-life), made through the real functions: a
// request edited after Granite Ridge quoted (its quote awaits re-confirmation), one withdrawn by the client, one
// expired by the expiry job's function, and an "Order again" copy of the withdrawn one. Idempotent.
import { and, eq, isNull } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import { MeasurementStepSchema } from "~/domain/request-forms";
import { expireOverdueRequests, repeatRequest, saveStep, withdrawRequest } from "~/models/requests/request-life.server";
import { saveMeasurement } from "~/models/requests/requests.server";
import { seedScenarioRequest, type ScenarioRequest } from "./seed-scenario.server";

const HALVORSEN = "Halvorsen Cathode Works";
const GRANITE = "Granite Ridge Characterisation";
const isoDate = (offsetDays: number) => new Date(Date.now() + offsetDays * 86_400_000).toISOString().slice(0, 10);

const REQUEST_LIFE_TITLES = {
  edited: "Spinel check of LMNO lot HC-2702",
  withdrawn: "Rock-salt impurity screen of LNO lot HC-2705",
  expired: "Olivine lattice of LMFP trial HC-2708",
} as const;

// Invented samples; approximate cells from common literature values, from memory: LiNi0.5Mn1.5O4 spinel
// (Fd-3m) a ≈ 8.17 Å; LiNiO2 (R-3m) a ≈ 2.88, c ≈ 14.19 Å; LiMn0.6Fe0.4PO4 olivine (Pnma) ≈ 10.40, 6.07, 4.73 Å.
const cubic = (label: string, formula: string, phase: string, a: number) => ({
  label,
  formula,
  form: "powder" as const,
  massMg: 300,
  expectedPhase: phase,
  crystalSystem: "cubic" as const,
  centering: "F" as const,
  cellA: a,
  cellB: a,
  cellC: a,
  cellAlpha: 90,
  cellBeta: 90,
  cellGamma: 90,
});

const granite = { lab: GRANITE, instrument: "Reflection diffractometer B (Co)", turnaroundDays: 8, notes: "Cobalt tube; return shipping included." };

const SPECS: Record<keyof typeof REQUEST_LIFE_TITLES, ScenarioRequest> = {
  edited: {
    title: REQUEST_LIFE_TITLES.edited,
    client: HALVORSEN,
    by: "owner@halvorsen.example",
    technique: "powder_reflection",
    samples: [{ fields: cubic("HC-2702-A", "LiNi0.5Mn1.5O4", "LNMO spinel", 8.17) }],
    range: [10, 80],
    currency: "EUR",
    budget: "500",
    quotes: [granite],
    end: "open",
  },
  withdrawn: {
    title: REQUEST_LIFE_TITLES.withdrawn,
    client: HALVORSEN,
    by: "owner@halvorsen.example",
    technique: "powder_reflection",
    samples: [
      {
        fields: {
          label: "HC-2705-A",
          formula: "LiNiO2",
          form: "powder",
          massMg: 350,
          expectedPhase: "LiNiO2 layered (R-3m)",
          crystalSystem: "trigonal",
          centering: "R",
          cellA: 2.88,
          cellB: 2.88,
          cellC: 14.19,
          cellAlpha: 90,
          cellBeta: 90,
          cellGamma: 120,
        },
      },
    ],
    range: [15, 90],
    currency: "EUR",
    quotes: [granite],
    end: "open",
  },
  expired: {
    title: REQUEST_LIFE_TITLES.expired,
    client: HALVORSEN,
    by: "owner@halvorsen.example",
    technique: "powder_reflection",
    samples: [
      {
        fields: {
          label: "HC-2708-A",
          formula: "LiMn0.6Fe0.4PO4",
          form: "powder",
          massMg: 400,
          expectedPhase: "LMFP olivine",
          crystalSystem: "orthorhombic",
          centering: "P",
          cellA: 10.4,
          cellB: 6.07,
          cellC: 4.73,
          cellAlpha: 90,
          cellBeta: 90,
          cellGamma: 90,
        },
      },
    ],
    range: [15, 110],
    currency: "EUR",
    quotes: [granite],
    end: "open",
  },
};

/** The ids of the demo's three requests (not the "Order again" copy), "" for any not seeded; for the tour. */
export async function requestLifeIds() {
  const ids = { edited: "", withdrawn: "", expired: "" };
  for (const key of Object.keys(ids) as (keyof typeof ids)[]) ids[key] = (await requestByTitle(REQUEST_LIFE_TITLES[key]).catch(() => null))?.id ?? "";
  return ids;
}

/** The demo's request with this title (not its "Order again" copy). */
async function requestByTitle(title: string) {
  const [org] = await db.select({ id: schema.organisations.id }).from(schema.organisations).where(eq(schema.organisations.name, HALVORSEN));
  const [row] = await db
    .select()
    .from(schema.requests)
    .where(and(eq(schema.requests.organisationId, org.id), eq(schema.requests.title, title), isNull(schema.requests.repeatOf)));
  if (!row) throw new Error(`demo request life: ${title} is missing`);
  return row;
}

/** Seeds the request-life demo; returns how many of its steps were made this run. */
export async function seedRequestLife() {
  let made = 0;
  for (const spec of Object.values(SPECS)) await seedScenarioRequest(spec);
  const [owner] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, "owner@halvorsen.example"));

  // Edited after Granite Ridge quoted: a later deadline and a wider range make revision 2.
  const edited = await requestByTitle(REQUEST_LIFE_TITLES.edited);
  if (edited.state === "open" && edited.revision === 1) {
    const step = MeasurementStepSchema.parse({
      rangeKind: "two_theta",
      rangeMin: 5,
      rangeMax: 90,
      preferredSource: "any",
      temperaturePoints: "",
      atmosphere: "air",
      quality: "standard",
      deadline: isoDate(52),
      budget: "500",
      currency: "EUR",
    });
    await saveStep(edited, owner.id, () => saveMeasurement(edited, step));
    made++;
  }

  const withdrawn = await requestByTitle(REQUEST_LIFE_TITLES.withdrawn);
  if (withdrawn.state === "open") {
    await withdrawRequest(withdrawn, owner.id);
    made++;
  }

  const expired = await requestByTitle(REQUEST_LIFE_TITLES.expired);
  if (expired.state === "open") {
    // The deadline passed (a date the form refuses), and the expiry job's own function closes the request.
    await db
      .update(schema.requests)
      .set({ deadline: isoDate(-1) })
      .where(eq(schema.requests.id, expired.id));
    await expireOverdueRequests(new Date(), [expired.id]);
    made++;
  }

  const [copy] = await db.select({ id: schema.requests.id }).from(schema.requests).where(eq(schema.requests.repeatOf, withdrawn.id));
  if (!copy) {
    await repeatRequest(await requestByTitle(REQUEST_LIFE_TITLES.withdrawn), owner.id);
    made++;
  }
  return made;
}
