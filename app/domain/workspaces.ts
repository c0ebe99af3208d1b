// The screens of each workspace (DESIGN.md), with what an empty one tells the person to do next.
export interface Section {
  slug: string;
  label: string;
  emptyTitle: string;
  emptyBody: string;
}

export const CLIENT_SECTIONS: Section[] = [
  {
    slug: "requests",
    label: "Requests",
    emptyTitle: "No requests yet",
    emptyBody: "Post a measurement request with your samples, their declared phase and cell, and a hazard declaration for each.",
  },
  { slug: "orders", label: "Orders", emptyTitle: "No orders yet", emptyBody: "An order appears here when you accept a lab's quote." },
  {
    slug: "data-room",
    label: "Data room",
    emptyTitle: "The data room is empty",
    emptyBody: "Delivered scans, lab reports and lattice-check results of your orders are kept here.",
  },
  {
    slug: "payments",
    label: "Payments",
    emptyTitle: "No payments yet",
    emptyBody: "Payments held for your orders, releases and refunds are listed here with their receipts.",
  },
];

export const LAB_SECTIONS: Section[] = [
  {
    slug: "inbox",
    label: "Inbox",
    emptyTitle: "No matching requests",
    emptyBody: "Open requests that your instruments and hazard acceptance can serve, and invitations, arrive here.",
  },
  {
    slug: "quotes",
    label: "Quotes",
    emptyTitle: "No quotes sent",
    emptyBody: "Quotes you send on requests are listed here with their state.",
  },
  {
    slug: "work-queue",
    label: "Work queue",
    emptyTitle: "No orders to work on",
    emptyBody: "Accepted and paid orders appear here, from samples in transit to data delivered.",
  },
  {
    slug: "capabilities",
    label: "Capabilities",
    emptyTitle: "No instruments published",
    emptyBody: "Describe your instruments, sources, sample stages and the hazards you accept.",
  },
  {
    slug: "price-list",
    label: "Price list",
    emptyTitle: "No prices set",
    emptyBody: "Set per-sample prices by technique, surcharges and turnaround.",
  },
  {
    slug: "payouts",
    label: "Payouts",
    emptyTitle: "No payouts yet",
    emptyBody: "Connect a payout account; payouts for accepted orders are listed here.",
  },
  {
    slug: "vetting",
    label: "Vetting",
    emptyTitle: "Application received",
    emptyBody: "Upload your accreditation evidence, radiation-licence attestation and a calibration scan of a line-position standard.",
  },
  {
    slug: "api-tokens",
    label: "API tokens",
    emptyTitle: "No API tokens",
    emptyBody: "Create a token for uploads straight from the instrument computer.",
  },
];

export const ADMIN_SECTIONS: Section[] = [
  {
    slug: "vetting-queue",
    label: "Vetting queue",
    emptyTitle: "No applications waiting",
    emptyBody: "Lab applications with their documents and calibration checks wait here for review.",
  },
  {
    slug: "disputes",
    label: "Disputes",
    emptyTitle: "No open disputes",
    emptyBody: "Disputes opened by clients appear here with the order's data room and timeline.",
  },
  {
    slug: "ledger",
    label: "Ledger",
    emptyTitle: "The ledger is empty",
    emptyBody: "Every money movement appears here as balanced double-entry rows.",
  },
];

export function findSection(sections: Section[], slug: string | undefined) {
  return sections.find((s) => s.slug === slug);
}
