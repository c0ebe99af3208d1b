// The milestones that notify people: their names, who cares, and which e-mails may not be turned off.

/** Who a kind of notification concerns: people of a client organisation, of a lab, platform admins, or anyone. */
type MilestoneReader = "client" | "lab" | "admin" | "anyone";

/** Every kind of notification, in the order a request and its order live through them. */
export const MILESTONES = {
  request_open: { label: "A new request your lab can serve", essential: false, for: ["lab"] },
  quote_received: { label: "A lab sent a quote", essential: false, for: ["client"] },
  message_posted: { label: "A new message from the client or the lab", essential: false, for: ["client", "lab"] },
  quote_accepted: { label: "Your quote was accepted", essential: false, for: ["lab"] },
  quote_declined: { label: "Your quote was not chosen", essential: false, for: ["lab"] },
  request_revised: { label: "A request you quoted on was changed", essential: false, for: ["lab"] },
  request_withdrawn: { label: "A request you quoted on was withdrawn", essential: false, for: ["lab"] },
  request_expired: { label: "A request reached its deadline without an order", essential: false, for: ["client", "lab"] },
  transfer_reminder: { label: "Bank transfer not yet received in full", essential: true, for: ["client"] },
  funds_held: { label: "Payment received and held", essential: true, for: ["client", "lab"] },
  samples_shipped: { label: "Samples shipped (with their hazard declaration)", essential: true, for: ["lab"] },
  samples_received: { label: "Samples received by the lab", essential: false, for: ["client"] },
  refused_on_arrival: { label: "Parcel refused on arrival", essential: true, for: ["client"] },
  measuring_started: { label: "Measurement started", essential: false, for: ["client"] },
  data_delivered: { label: "Data delivered, with the lattice check", essential: false, for: ["client"] },
  lot_rule_broken: { label: "A lot of a material breaks a control rule", essential: false, for: ["client"] },
  review_window_ending: { label: "Review window ends tomorrow", essential: true, for: ["client"] },
  delivery_accepted: { label: "Delivery accepted", essential: true, for: ["client", "lab"] },
  payout_sent: { label: "Payout sent to the lab", essential: true, for: ["lab"] },
  order_cancelled: { label: "Order cancelled and refunded", essential: true, for: ["client", "lab"] },
  dispute_opened: { label: "Dispute opened", essential: true, for: ["client", "lab", "admin"] },
  dispute_answered: { label: "The lab answered a dispute", essential: true, for: ["client", "admin"] },
  dispute_evidence_added: { label: "Evidence added to a dispute", essential: true, for: ["client", "lab", "admin"] },
  dispute_resolved: { label: "Dispute resolved", essential: true, for: ["client", "lab"] },
  agreement_changed: {
    label: "A standing agreement proposed, agreed, declined, given notice, ended or a lot ordered",
    essential: false,
    for: ["client", "lab"],
  },
  lab_application_received: { label: "Lab application to vet", essential: false, for: ["admin"] },
  lab_approved: { label: "Lab approved", essential: false, for: ["lab"] },
  lab_rejected: { label: "Lab application declined", essential: false, for: ["lab"] },
  calibration_lapsed: { label: "An instrument's calibration is overdue or out of control", essential: true, for: ["lab", "admin"] },
  organisation_invitation: { label: "Invitation to an organisation", essential: false, for: ["anyone"] },
  password_reset: { label: "Password reset link (only when you ask for one)", essential: true, for: ["anyone"] },
} as const satisfies Record<string, { label: string; essential: boolean; for: readonly MilestoneReader[] }>;

export type MilestoneKind = keyof typeof MILESTONES;

export const MILESTONE_KINDS = Object.keys(MILESTONES) as MilestoneKind[];

export function isMilestoneKind(v: unknown): v is MilestoneKind {
  return typeof v === "string" && Object.hasOwn(MILESTONES, v);
}

/** Payment, dispute and safety messages are sent whatever a person's preferences say. */
export function isEssential(kind: MilestoneKind) {
  return MILESTONES[kind].essential;
}

/** The kinds that concern a person with these roles (the settings screen offers only these). */
export function kindsFor(roles: { client: boolean; lab: boolean; admin: boolean }): MilestoneKind[] {
  return MILESTONE_KINDS.filter((kind) =>
    (MILESTONES[kind].for as readonly MilestoneReader[]).some(
      (r) => r === "anyone" || (r === "client" && roles.client) || (r === "lab" && roles.lab) || (r === "admin" && roles.admin),
    ),
  );
}
