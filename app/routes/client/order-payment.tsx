// /client/orders/:id/payment — where the payment page sends the client back; asks the provider what happened.
import { requireOrderSide } from "~/utils/permissions.server";
import { PaymentProblem } from "~/models/payments/provider.server";
import { syncCheckout } from "~/models/payments/checkout.server";
import { redirectWithToast } from "~/utils/toast.server";
import type { Route } from "./+types/order-payment";

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireOrderSide(request, "client", params.id);
  const sessionId = new URL(request.url).searchParams.get("session_id") ?? "";
  const back = `/client/orders/${params.id}`;
  if (!/^cs_[A-Za-z0-9_]+$/.test(sessionId)) return redirectWithToast(back, { kind: "error", message: "That payment link is not complete." });
  // The webhook may not have arrived yet; asking the provider here means the client sees the truth now.
  try {
    const result = await syncCheckout(sessionId);
    if (result.state === "paid")
      return redirectWithToast(back, { kind: "success", message: "Payment received. The money is held until you accept the delivery." });
    if (result.state === "declined") return redirectWithToast(back, { kind: "error", message: `The payment was declined: ${result.reason}` });
    return redirectWithToast(back, { kind: "info", message: "The payment is not complete yet." });
  } catch (err) {
    if (err instanceof PaymentProblem) return redirectWithToast(back, { kind: "error", message: err.message });
    throw err;
  }
}
