// Files the browser tests upload: a minimal PDF, and powder scans simulated by the project's own engine.
import type { Radiation } from "~/diffraction";
import { formatScanAsXy, simulatePattern } from "~/diffraction/simulate";

/** The smallest file a PDF check accepts (header, one object, trailer). */
export const MINIMAL_PDF = "%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n";

type Simulation = Parameters<typeof simulatePattern>[0];

/** The .xy text of a simulated scan: 0.02° steps, a sloping background and seeded counting noise; Cu Kα1+Kα2 unless told. */
export function simulatedXy(
  title: string,
  opts: {
    structure: Simulation["structure"];
    cell?: Simulation["cell"];
    radiation?: Radiation;
    from: number;
    to: number;
    background: number;
    slope: number;
    seed: number;
  },
) {
  const sim = simulatePattern({
    structure: opts.structure,
    ...(opts.cell ? { cell: opts.cell } : {}),
    radiation: opts.radiation ?? { kind: "anode", anode: "Cu", monochromation: "k_alpha_doublet" },
    twoThetaMin: opts.from,
    twoThetaMax: opts.to,
    step: 0.02,
    background: { constant: opts.background, slope: opts.slope },
    noise: { seed: opts.seed },
  });
  return formatScanAsXy(sim, title);
}
