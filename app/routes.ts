// Every screen and resource route of Diffractory, grouped by who uses it.
import { index, layout, prefix, route, type RouteConfig } from "@react-router/dev/routes";

export default [
  layout("routes/public/layout.tsx", [
    index("routes/public/home.tsx"),
    route("labs", "routes/public/labs.tsx"),
    route("labs/:slug", "routes/public/lab-profile.tsx"),
    route("how-it-works", "routes/public/how-it-works.tsx"),
    route("safety", "routes/public/safety.tsx"),
    route("sign-in", "routes/public/sign-in.tsx"),
    route("create-account", "routes/public/create-account.tsx"),
  ]),
  route("sign-out", "routes/account/sign-out.tsx"),
  route("switch-organisation", "routes/account/switch-organisation.tsx"),

  ...prefix("client", [
    layout("routes/workspace-layout.tsx", { id: "client-layout" }, [
      index("routes/client/home.tsx"),
      route("members", "routes/client/members.tsx"),
      route("requests", "routes/client/requests.tsx"),
      route("requests/new", "routes/client/request-samples.tsx", { id: "client-request-new" }),
      route("requests/:id", "routes/client/request.tsx"),
      route("requests/:id/edit/samples", "routes/client/request-samples.tsx", { id: "client-request-samples" }),
      route("requests/:id/edit/hazards", "routes/client/request-hazards.tsx"),
      route("requests/:id/edit/measurement", "routes/client/request-measurement.tsx"),
      route("requests/:id/edit/labs", "routes/client/request-labs.tsx"),
      route("requests/:id/edit/review", "routes/client/request-review.tsx"),
      route("orders", "routes/client/orders.tsx"),
      route("payments", "routes/client/payments.tsx"),
      route("payments/:id/receipt", "routes/client/payment-receipt.tsx"),
      route("orders/:id", "routes/client/order.tsx"),
      route("orders/:id/payment", "routes/client/order-payment.tsx"),
      route("orders/:id/packing-slip", "routes/client/packing-slip.tsx"),
      route(":section", "routes/workspace-section.tsx", { id: "client-section" }),
    ]),
    route("requests/:id/sds-upload", "routes/client/request-sds-upload.ts"),
  ]),
  ...prefix("lab", [
    layout("routes/workspace-layout.tsx", { id: "lab-layout" }, [
      index("routes/lab/home.tsx"),
      route("inbox", "routes/lab/inbox.tsx"),
      route("requests/:id", "routes/lab/request.tsx"),
      route("quotes", "routes/lab/quotes.tsx"),
      route("vetting", "routes/lab/vetting.tsx"),
      route("capabilities", "routes/lab/capabilities.tsx"),
      route("price-list", "routes/lab/price-list.tsx"),
      route("payouts", "routes/lab/payouts.tsx"),
      route("work-queue", "routes/lab/work-queue.tsx"),
      route("orders/:id", "routes/lab/order.tsx"),
      route(":section", "routes/workspace-section.tsx", { id: "lab-section" }),
    ]),
    route("vetting/upload", "routes/lab/vetting-upload.ts"),
  ]),
  ...prefix("admin", [
    layout("routes/workspace-layout.tsx", { id: "admin-layout" }, [
      index("routes/admin/home.tsx"),
      route("users", "routes/admin/users.tsx"),
      route("audit-log", "routes/admin/audit-log.tsx"),
      route("vetting-queue", "routes/admin/vetting-queue.tsx"),
      route("labs/:labId", "routes/admin/lab-review.tsx"),
      route("ledger", "routes/admin/ledger.tsx"),
      route("disputes", "routes/admin/disputes.tsx"),
      route(":section", "routes/workspace-section.tsx", { id: "admin-section" }),
    ]),
  ]),

  route("admin/ledger/export", "routes/admin/ledger-export.ts"),
  route("checks/:id", "routes/check.tsx"),
  route("checks/:id/peaks.csv", "routes/check-peaks-csv.ts"),
  route("checks/:id/result.json", "routes/check-result-json.ts"),

  ...prefix("api", [
    route("health", "routes/api/health.ts"),
    route("me", "routes/api/me.ts"),
    route("labs", "routes/api/labs.ts"),
    route("requests/:id/matches", "routes/api/request-matches.ts"),
    route("orders/:id", "routes/api/order.ts"),
    route("checks/:id", "routes/api/check.ts"),
    route("admin/ledger/summary", "routes/api/admin/ledger-summary.ts"),
    route("webhooks/payments", "routes/api/webhooks-payments.ts"),
  ]),
  route("*", "routes/public/not-found.tsx"),
] satisfies RouteConfig;
