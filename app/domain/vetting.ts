// Lab vetting: the states, the calibration standards and the tolerance an approval is held to (pure, shared by server and screens).
import type { WholePatternFigures } from "~/diffraction/phases";
import { z } from "zod";
import type { Verdict } from "~/diffraction/verdict";
import { ANODE_CHOICES, MONOCHROMATION_CHOICES } from "~/domain/capabilities";
import { FileNameSchema } from "~/domain/storage-keys";

export const VETTING_STATES = ["applied", "in_review", "approved", "rejected", "suspended"] as const;
export type VettingState = (typeof VETTING_STATES)[number];

export const VETTING_STATE_BADGES: Record<VettingState, { label: string; tone: "neutral" | "brand" | "ok" | "caution" | "danger" }> = {
  applied: { label: "Applied", tone: "neutral" },
  in_review: { label: "In review", tone: "brand" },
  approved: { label: "Approved", tone: "ok" },
  rejected: { label: "Rejected", tone: "danger" },
  suspended: { label: "Suspended", tone: "caution" },
};

/** States from which a lab may hand in (or hand in again) its application. */
export const SUBMITTABLE_STATES: VettingState[] = ["applied", "in_review", "rejected"];

/** The admin's decisions and the states each may start from. */
export const DECISIONS = {
  approve: { from: ["in_review"], to: "approved" },
  reject: { from: ["in_review"], to: "rejected" },
  suspend: { from: ["approved"], to: "suspended" },
  reinstate: { from: ["suspended"], to: "approved" },
} as const satisfies Record<string, { from: VettingState[]; to: VettingState }>;
export type Decision = keyof typeof DECISIONS;

/** Line-position standards with their certified cells (docs/reference-values.md#certified-lattice-parameters, from the NIST certificates). */
export const CALIBRATION_STANDARDS = {
  si_srm640c: { label: "Silicon, NIST SRM 640c", a: 5.4311946, uncertainty: 0.0000092, centering: "F" },
  lab6_srm660c: { label: "LaB6, NIST SRM 660c", a: 4.156826, uncertainty: 0.00008, centering: "P" },
} as const;
export type CalibrationStandard = keyof typeof CALIBRATION_STANDARDS;
export const CALIBRATION_STANDARD_KEYS = Object.keys(CALIBRATION_STANDARDS) as [CalibrationStandard, ...CalibrationStandard[]];

/**
 * An approval needs |refined a − certified a| at most this, in Å. Lab instruments reproduce lattice
 * parameters to about ±0.001 Å without an internal standard (docs/reference-values.md#facts-of-the-trade); a
 * calibration scan of the standard itself should do better, and the certificates' own uncertainties
 * (≤ 0.00008 Å) are far smaller, so half that reproducibility is the bar.
 */
export const APPROVAL_TOLERANCE_A = 0.0005;
export const APPROVAL_TOLERANCE_REASON =
  "Lab instruments reproduce lattice parameters to about ±0.001 Å without an internal standard; a scan of the standard itself should do better, and the certificate's uncertainty is far smaller.";

export interface CalibrationPlot {
  twoTheta: number[];
  observed: number[];
  /** The sum of the freely fitted peaks and the background. */
  fitted: number[];
  background: number[];
  /** The whole-pattern fit's calculated curve (absent in older checks). */
  calculated?: number[] | null;
  ticks: { twoTheta: number; label: string }[];
}

/** What is stored in labs.calibration_check: the figures the admin judges and the arrays of the plot. */
export interface CalibrationCheck {
  standard: CalibrationStandard;
  certifiedA: number;
  certifiedUncertainty: number;
  refinedA: number | null;
  esdA: number | null;
  deviationA: number | null;
  deviationPpm: number | null;
  zeroShift: number;
  zeroShiftEsd: number | null;
  verdict: Verdict;
  reasons: string[];
  warnings: string[];
  peaksFound: number;
  peaksIndexed: number;
  m20: number | null;
  fn: number | null;
  instrument: { name: string; anode: string; monochromation: string; wavelength: number };
  /** Caglioti U, V, W (degrees² 2θ) fitted to the standard's peak widths and the peaks used; absent in older checks. */
  instrumentProfile?: { U: number; V: number; W: number; peaks: number } | null;
  /** Why no profile could be fitted, in one sentence. */
  instrumentProfileNote?: string | null;
  /** The scan's format as read (absent in older checks). */
  scanFormatLabel?: string | null;
  scanFileName: string;
  checkedAt: string;
  /** The whole-pattern fit's figures against the certified cell (absent in older checks). */
  wholePattern?: WholePatternFigures | null;
  plot: CalibrationPlot;
}

export function withinTolerance(check: Pick<CalibrationCheck, "deviationA"> | null | undefined) {
  return check?.deviationA != null && Math.abs(check.deviationA) <= APPROVAL_TOLERANCE_A;
}

/**
 * Why a lab cannot be shown as approved, in one sentence; null when it can. An approved lab must have its
 * radiation-licence statement signed and a calibration scan checked (docs/design.md#labs-and-vetting); whether
 * the check is within tolerance is judged by the approval itself (an admin may override it with a reason).
 */
export function approvalProblem(lab: { licenceAttestation: string | null; licenceAttestedAt: Date | string | null; calibrationCheck: unknown }) {
  const check = lab.calibrationCheck as Partial<CalibrationCheck> | null;
  if (!lab.licenceAttestation || !lab.licenceAttestedAt) {
    return "The lab has not signed the radiation-licence statement; it cannot be approved until its application includes it.";
  }
  if (!check?.checkedAt) return "The lab's calibration scan has not been checked; it cannot be approved until its application includes one.";
  return null;
}

/** A calibration scan as vetting's and the repeat calibrations' forms take it: the standard and the stored scan (uploaded straight to storage first). */
export const CalibrationScanFields = {
  standard: z.enum(CALIBRATION_STANDARD_KEYS, { error: "Choose the standard the calibration scan was measured on." }),
  scanKey: z.string({ error: "Upload the calibration scan." }).min(1, "Upload the calibration scan."),
  scanName: FileNameSchema.default("scan.xy"),
  scanSha256: z
    .string()
    .regex(/^[0-9a-f]{64}$/i)
    .optional(),
};

/** The form a lab manager fills in; file fields carry what DirectUpload reported. */
export const VettingApplicationSchema = z.object({
  description: z
    .string({ error: "Describe the lab in a few sentences." })
    .trim()
    .min(20, "Describe the lab in a few sentences (at least 20 characters).")
    .max(2000, "At most 2000 characters."),
  accreditationNumber: z
    .string({ error: "Enter the ISO/IEC 17025 accreditation number." })
    .trim()
    .min(3, "Enter the ISO/IEC 17025 accreditation number.")
    .max(60, "At most 60 characters."),
  accreditationExpiry: z.iso
    .date({ error: "Enter the expiry date as YYYY-MM-DD." })
    .refine((d) => d > new Date().toISOString().slice(0, 10), "The accreditation has expired; hand in the current certificate."),
  certificateKey: z.string({ error: "Upload the accreditation certificate." }).min(1, "Upload the accreditation certificate."),
  certificateName: FileNameSchema.default("certificate"),
  certificateSha256: z
    .string()
    .regex(/^[0-9a-f]{64}$/i)
    .optional(),
  attest: z.literal(true, { error: "Confirm the radiation-licence statement." }),
  attestedName: z
    .string({ error: "Sign the statement with your full name." })
    .trim()
    .min(3, "Sign the statement with your full name.")
    .max(120, "At most 120 characters."),
  ...CalibrationScanFields,
  instrumentName: z
    .string({ error: "Name the instrument the scan was measured on." })
    .trim()
    .min(2, "Name the instrument the scan was measured on.")
    .max(120, "At most 120 characters."),
  anode: z.enum(ANODE_CHOICES, { error: "Choose the anode of the source." }),
  monochromation: z.enum(MONOCHROMATION_CHOICES, { error: "Choose how the beam was monochromated." }),
});

/** The statement as stored once signed: the words the manager confirmed and their name. */
export function signedStatement(statement: string, name: string) {
  return `${statement} — signed ${name}`;
}

/** The statement a lab manager confirms; stored with their name, user and time. */
export const LICENCE_STATEMENT =
  "Our X-ray instruments are registered and operated under a valid radiation licence held by this lab, only by staff trained under it, and the licence covers the measurements we will offer on Diffractory.";
