// What a lattice check's screens show beside the check itself: the sample its scan belongs to.
import { eq } from "drizzle-orm";
import { db, schema } from "~/db/client.server";

/** The sample the checked scan belongs to (label and declared phase), or null. */
export async function sampleOfFile(sampleId: string | null) {
  if (!sampleId) return null;
  const [sample] = await db.select().from(schema.samples).where(eq(schema.samples.id, sampleId));
  return sample ?? null;
}
