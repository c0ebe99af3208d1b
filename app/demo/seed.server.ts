// Seeds the invented demo scenario of docs/design.md#demo-scenario; running it again changes nothing that is already there.
import { and, eq, sql } from "drizzle-orm";
import { db, schema } from "~/db/client.server";
import type { MembershipRole, OrganisationKind } from "~/db/schema";
import { slugify } from "~/utils/auth.server";
import { hashPassword } from "~/models/accounts/password.server";
import { DEMO_ADMIN_TOTP_SECRET, DEMO_PASSWORD } from "./demo-secrets";
import { type DemoVetting, vetDemoLab } from "./seed-vetting.server";

export { DEMO_PASSWORD };

interface DemoOrg {
  name: string;
  kind: OrganisationKind;
  city: string;
  country: string;
}

const ORGS: DemoOrg[] = [
  { name: "Halvorsen Cathode Works", kind: "client", city: "Tromsvik", country: "Norway" },
  { name: "Pinecrest Solid Forms", kind: "client", city: "Ashbourne Vale", country: "United Kingdom" },
  { name: "Granite Ridge Characterisation", kind: "lab", city: "Granite Falls", country: "Canada" },
  { name: "Lakeside Institute X-ray Core", kind: "lab", city: "Lakeside", country: "United States" },
  { name: "Meridian Analytical", kind: "lab", city: "Porto Meridiano", country: "Portugal" },
];

interface DemoPerson {
  email: string;
  name: string;
  isAdmin?: boolean;
  memberships: [string, MembershipRole][];
}

export const DEMO_PEOPLE: DemoPerson[] = [
  { email: "owner@halvorsen.example", name: "Ingrid Halvorsen-Lund", memberships: [["Halvorsen Cathode Works", "owner"]] },
  { email: "member@halvorsen.example", name: "Tobias Rekdal", memberships: [["Halvorsen Cathode Works", "member"]] },
  { email: "owner@pinecrest.example", name: "Amara Whitcombe", memberships: [["Pinecrest Solid Forms", "owner"]] },
  { email: "member@pinecrest.example", name: "Jonah Peverell", memberships: [["Pinecrest Solid Forms", "member"]] },
  {
    email: "consultant@fieldnotes.example",
    name: "Rosalind Okafor-Brandt",
    // Manages the testing for both clients, so each one's milestones reach them (and their bell counts the other's).
    memberships: [
      ["Halvorsen Cathode Works", "manager"],
      ["Pinecrest Solid Forms", "manager"],
    ],
  },
  { email: "lab@graniteridge.example", name: "Marcus Tillery", memberships: [["Granite Ridge Characterisation", "manager"]] },
  { email: "operator@graniteridge.example", name: "Priya Castellanos", memberships: [["Granite Ridge Characterisation", "operator"]] },
  { email: "lab@lakeside.example", name: "Dana Whitford", memberships: [["Lakeside Institute X-ray Core", "manager"]] },
  { email: "lab@meridian.example", name: "Tiago Amaral Sousa", memberships: [["Meridian Analytical", "manager"]] },
  { email: "admin@diffractory.example", name: "Platform Admin", isAdmin: true, memberships: [] },
];

export async function seedDemo() {
  const passwordHash = await hashPassword(DEMO_PASSWORD);
  const orgIds = new Map<string, string>();
  for (const org of ORGS) {
    const slug = slugify(org.name);
    await db
      .insert(schema.organisations)
      .values({ ...org, slug })
      .onConflictDoNothing();
    const [row] = await db.select().from(schema.organisations).where(eq(schema.organisations.slug, slug));
    orgIds.set(org.name, row.id);
  }
  for (const person of DEMO_PEOPLE) {
    await db
      .insert(schema.users)
      .values({ email: person.email, name: person.name, passwordHash, isAdmin: person.isAdmin ?? false })
      .onConflictDoNothing();
    const [user] = await db.select().from(schema.users).where(sql`lower(${schema.users.email}) = ${person.email}`);
    // Admins must have a second factor; the demo admin's key is the published demo one.
    if (person.isAdmin && !user.totpEnabledAt) {
      await db.update(schema.users).set({ totpSecret: DEMO_ADMIN_TOTP_SECRET, totpEnabledAt: new Date() }).where(eq(schema.users.id, user.id));
    }
    for (const [orgName, role] of person.memberships) {
      const organisationId = orgIds.get(orgName)!;
      const existing = await db
        .select()
        .from(schema.memberships)
        .where(and(eq(schema.memberships.userId, user.id), eq(schema.memberships.organisationId, organisationId)));
      if (existing.length === 0) await db.insert(schema.memberships).values({ userId: user.id, organisationId, role });
    }
  }
  await seedLabs(orgIds);
  await seedRequests(orgIds);
  return { organisations: ORGS.length, people: DEMO_PEOPLE.length };
}

type Technique = (typeof schema.technique.enumValues)[number];

interface DemoInstrument {
  name: string;
  technique: Technique;
  anode: "Cu" | "Co" | "Mo";
  monochromation: "k_alpha_doublet" | "k_alpha1_only" | "k_beta_filtered";
  twoTheta: [number, number];
  step: number;
  detector: "point" | "strip_1d" | "area_2d";
  energyDiscrimination: boolean;
  sampleForms: string[];
  stages: { name: string; range: [number, number]; atmospheres: string[] }[];
}

type DemoLab = {
  name: string;
  description: string;
  accreditationNumber: string;
  instruments: DemoInstrument[];
  prices: {
    currency: string;
    perSample: Partial<Record<Technique, number>>;
    extraPoint: number;
    hour: number;
    prep: number;
    hazardous: number;
    turnaround: number;
  };
  acceptance: { pictograms: string[]; specialCategories: string[] };
} & ({ state: "applied" } | { state: "approved"; vetting: DemoVetting });

const LABS: DemoLab[] = [
  {
    name: "Granite Ridge Characterisation",
    state: "approved",
    description:
      "Contract lab for battery and ceramic materials: two reflection diffractometers with copper and cobalt tubes, and a hot stage for in-situ phase work up to 1473 K.",
    accreditationNumber: "GRC-17025-0412",
    instruments: [
      {
        name: "Reflection diffractometer A (Cu)",
        technique: "powder_reflection",
        anode: "Cu",
        monochromation: "k_beta_filtered",
        twoTheta: [5, 150],
        step: 0.005,
        detector: "strip_1d",
        energyDiscrimination: false,
        sampleForms: ["powder", "pellet"],
        stages: [{ name: "Hot stage", range: [298, 1473], atmospheres: ["air", "nitrogen"] }],
      },
      {
        name: "Reflection diffractometer B (Co)",
        technique: "powder_reflection",
        anode: "Co",
        monochromation: "k_beta_filtered",
        twoTheta: [5, 150],
        step: 0.005,
        detector: "strip_1d",
        energyDiscrimination: false,
        sampleForms: ["powder", "pellet"],
        stages: [],
      },
    ],
    prices: { currency: "EUR", perSample: { powder_reflection: 18000 }, extraPoint: 4500, hour: 9500, prep: 1500, hazardous: 6000, turnaround: 8 },
    acceptance: { pictograms: ["GHS02", "GHS05", "GHS06", "GHS07", "GHS08", "GHS09"], specialCategories: ["nanomaterial", "air_sensitive"] },
    vetting: {
      managerEmail: "lab@graniteridge.example",
      standard: "si_srm640c",
      instrumentName: "Reflection diffractometer A (Cu)",
      anode: "Cu",
      monochromation: "k_beta_filtered",
      twoTheta: [15, 140],
      step: 0.02,
      zeroShift: -0.008,
      seed: 640,
    },
  },
  {
    name: "Lakeside Institute X-ray Core",
    state: "approved",
    description: "University core facility: molybdenum transmission diffractometer for capillaries and foils, with a cryostat from 90 K.",
    accreditationNumber: "LIX-17025-2207",
    instruments: [
      {
        name: "Transmission diffractometer (Mo)",
        technique: "powder_transmission",
        anode: "Mo",
        monochromation: "k_alpha1_only",
        twoTheta: [2, 145],
        step: 0.01,
        detector: "strip_1d",
        energyDiscrimination: true,
        sampleForms: ["powder", "capillary"],
        stages: [{ name: "Cryostat", range: [90, 300], atmospheres: ["vacuum", "nitrogen"] }],
      },
    ],
    prices: { currency: "USD", perSample: { powder_transmission: 21000 }, extraPoint: 5000, hour: 11000, prep: 2000, hazardous: 8000, turnaround: 12 },
    acceptance: { pictograms: ["GHS07", "GHS08", "GHS09"], specialCategories: ["nanomaterial", "biological"] },
    vetting: {
      managerEmail: "lab@lakeside.example",
      standard: "lab6_srm660c",
      instrumentName: "Transmission diffractometer (Mo)",
      anode: "Mo",
      monochromation: "k_alpha1_only",
      twoTheta: [8, 60],
      step: 0.01,
      zeroShift: 0.005,
      seed: 661,
    },
  },
  {
    name: "Meridian Analytical",
    state: "applied",
    description: "Independent analytical lab applying to sell reflection measurements.",
    accreditationNumber: "MA-17025-0098",
    instruments: [
      {
        name: "Benchtop diffractometer (Cu)",
        technique: "powder_reflection",
        anode: "Cu",
        monochromation: "k_beta_filtered",
        twoTheta: [10, 120],
        step: 0.01,
        detector: "strip_1d",
        energyDiscrimination: false,
        sampleForms: ["powder"],
        stages: [],
      },
    ],
    prices: { currency: "EUR", perSample: { powder_reflection: 9500 }, extraPoint: 0, hour: 6000, prep: 0, hazardous: 0, turnaround: 5 },
    acceptance: { pictograms: [], specialCategories: [] },
  },
];

async function seedLabs(orgIds: Map<string, string>) {
  for (const lab of LABS) {
    const labId = orgIds.get(lab.name)!;
    const inserted = await db
      .insert(schema.labs)
      .values({
        organisationId: labId,
        description: lab.description,
        // An approved lab is approved below, on the evidence an admin's approval needs.
        vettingState: "applied",
        accreditationNumber: lab.accreditationNumber,
        accreditationExpiry: "2028-06-30",
      })
      .onConflictDoNothing()
      .returning();
    if (lab.state === "approved") await vetDemoLab(labId, lab.name, lab.accreditationNumber, lab.vetting);
    if (inserted.length === 0) continue; // already seeded
    for (const inst of lab.instruments) {
      const [row] = await db
        .insert(schema.instruments)
        .values({
          labId,
          name: inst.name,
          technique: inst.technique,
          anode: inst.anode,
          monochromation: inst.monochromation,
          twoThetaMin: inst.twoTheta[0],
          twoThetaMax: inst.twoTheta[1],
          smallestStep: inst.step,
          detector: inst.detector,
          energyDiscrimination: inst.energyDiscrimination,
          sampleForms: inst.sampleForms,
        })
        .returning();
      for (const stage of inst.stages) {
        await db.insert(schema.sampleStages).values({
          instrumentId: row.id,
          name: stage.name,
          minTemperatureK: stage.range[0],
          maxTemperatureK: stage.range[1],
          atmospheres: stage.atmospheres,
        });
      }
    }
    const p = lab.prices;
    await db.insert(schema.priceLists).values({
      labId,
      currency: p.currency,
      perSampleMinor: p.perSample,
      perExtraTemperaturePointMinor: p.extraPoint,
      perInstrumentHourMinor: p.hour,
      samplePreparationMinor: p.prep,
      hazardousHandlingMinor: p.hazardous,
      turnaroundDays: p.turnaround,
    });
    await db.insert(schema.hazardAcceptance).values({ labId, ...lab.acceptance });
  }
}

/** Halvorsen's open request: an iron phosphate cathode, the fluorescence case under copper radiation. */
async function seedRequests(orgIds: Map<string, string>) {
  const organisationId = orgIds.get("Halvorsen Cathode Works")!;
  const title = "Phase check of LFP cathode batch HC-2611";
  const existing = await db
    .select()
    .from(schema.requests)
    .where(and(eq(schema.requests.organisationId, organisationId), eq(schema.requests.title, title)));
  if (existing.length > 0) return;
  const [owner] = await db.select().from(schema.users).where(eq(schema.users.email, "owner@halvorsen.example"));
  const [request] = await db
    .insert(schema.requests)
    .values({
      organisationId,
      createdBy: owner.id,
      title,
      technique: "powder_reflection",
      state: "open",
      draftStep: "review",
      rangeKind: "two_theta",
      rangeMin: 10,
      rangeMax: 90,
      preferredSource: "any",
      atmosphere: "air",
      quality: "standard",
      budgetMinor: 60000,
      currency: "EUR",
      visibility: "open",
      openedAt: new Date(),
    })
    .returning();
  await db.insert(schema.samples).values({
    requestId: request.id,
    position: 0,
    label: "HC-2611-A",
    formula: "LiFePO4",
    elements: ["Fe", "Li", "O", "P"],
    form: "powder",
    massMg: 500,
    expectedPhase: "LiFePO4, olivine (triphylite)",
    crystalSystem: "orthorhombic",
    centering: "P",
    // Approximate olivine cell (Pnma), from memory of common literature values.
    cellA: 10.33,
    cellB: 6.01,
    cellC: 4.69,
    cellAlpha: 90,
    cellBeta: 90,
    cellGamma: 90,
  });
}
