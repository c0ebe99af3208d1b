// The milestones that notify people: their names, who cares, and which e-mails may not be turned off.

/** Every kind of notification, in the order a request and its order live through them. */
export const MILESTONES = {
  request_open: { label: "A new request your lab can serve", essential: false },
  quote_received: { label: "A lab sent a quote", essential: false },
  quote_accepted: { label: "Your quote was accepted", essential: false },
  quote_declined: { label: "Your quote was not chosen", essential: false },
  funds_held: { label: "Payment received and held", essential: true },
  samples_shipped: { label: "Samples shipped (with their hazard declaration)", essential: true },
  samples_received: { label: "Samples received by the lab", essential: false },
  refused_on_arrival: { label: "Parcel refused on arrival", essential: true },
  measuring_started: { label: "Measurement started", essential: false },
  data_delivered: { label: "Data delivered, with the lattice check", essential: false },
  review_window_ending: { label: "Review window ends tomorrow", essential: true },
  delivery_accepted: { label: "Delivery accepted", essential: true },
  payout_sent: { label: "Payout sent to the lab", essential: true },
  order_cancelled: { label: "Order cancelled and refunded", essential: true },
  dispute_opened: { label: "Dispute opened", essential: true },
  dispute_resolved: { label: "Dispute resolved", essential: true },
  lab_application_received: { label: "Lab application to vet", essential: false },
  lab_approved: { label: "Lab approved", essential: false },
  lab_rejected: { label: "Lab application declined", essential: false },
  organisation_invitation: { label: "Invitation to an organisation", essential: false },
  password_reset: { label: "Password reset link (only when you ask for one)", essential: true },
} as const satisfies Record<string, { label: string; essential: boolean }>;

export type MilestoneKind = keyof typeof MILESTONES;

export const MILESTONE_KINDS = Object.keys(MILESTONES) as MilestoneKind[];

export function isMilestoneKind(v: unknown): v is MilestoneKind {
  return typeof v === "string" && Object.hasOwn(MILESTONES, v);
}

/** Payment, dispute and safety messages are sent whatever a person's preferences say. */
export function isEssential(kind: MilestoneKind) {
  return MILESTONES[kind].essential;
}
