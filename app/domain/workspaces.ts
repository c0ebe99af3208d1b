// The screens of each workspace, in the order its navigation lists them.
export interface Section {
  slug: string;
  label: string;
}

export const CLIENT_SECTIONS: Section[] = [
  { slug: "requests", label: "Requests" },
  { slug: "orders", label: "Orders" },
  { slug: "agreements", label: "Agreements" },
  { slug: "materials", label: "Materials" },
  { slug: "data-room", label: "Data room" },
  { slug: "payments", label: "Payments" },
];

export const LAB_SECTIONS: Section[] = [
  { slug: "inbox", label: "Inbox" },
  { slug: "quotes", label: "Quotes" },
  { slug: "work-queue", label: "Work queue" },
  { slug: "agreements", label: "Agreements" },
  { slug: "capabilities", label: "Capabilities" },
  { slug: "price-list", label: "Price list" },
  { slug: "payouts", label: "Payouts" },
  { slug: "statements", label: "Statements" },
  { slug: "vetting", label: "Vetting" },
  { slug: "api-tokens", label: "API tokens" },
];

export const ADMIN_SECTIONS: Section[] = [
  { slug: "vetting-queue", label: "Vetting queue" },
  { slug: "disputes", label: "Disputes" },
  { slug: "ledger", label: "Ledger" },
  { slug: "rates", label: "Exchange rates" },
  { slug: "invoices", label: "Invoices" },
];
