// Who may open which workspace: each loader checks for itself (the layout is not trusted to do it).
import { beforeAll, describe, expect, it } from "vitest";
import { seedDemo } from "~/demo/seed.server";
import { loader as adminHome } from "~/routes/admin/home";
import { loader as auditLog } from "~/routes/admin/audit-log";
import { loader as users } from "~/routes/admin/users";
import { loader as clientHome } from "~/routes/client/home";
import { loader as members } from "~/routes/client/members";
import { loader as labHome } from "~/routes/lab/home";
import { loader as signInPage } from "~/routes/public/sign-in";
import { loader as notFoundPage } from "~/routes/public/not-found";
import { loader as labInbox } from "~/routes/lab/inbox";
import { loader as adminLedger } from "~/routes/admin/ledger";
import { callRoute, getRequest, sessionCookieFor } from "./route-call";

const cookies: Record<string, string> = {};
async function as(email: string) {
  // The admin's sign-in takes a second-factor code too.
  cookies[email] ??= await sessionCookieFor(email);
  return cookies[email];
}

beforeAll(async () => {
  await seedDemo();
});

const CLIENT = "owner@halvorsen.example";
const MEMBER = "member@halvorsen.example";
const LAB = "lab@graniteridge.example";
const OPERATOR = "operator@graniteridge.example";
const ADMIN = "admin@diffractory.example";

describe("workspace access", () => {
  const cases: [string, Parameters<typeof callRoute>[0], string, string | null, number][] = [
    ["client home", clientHome, "/client", CLIENT, 200],
    ["client home by a member", clientHome, "/client", MEMBER, 200],
    ["client home by a lab manager", clientHome, "/client", LAB, 403],
    ["client home by the admin", clientHome, "/client", ADMIN, 403],
    ["client home signed out", clientHome, "/client", null, 302],
    ["client members", members, "/client/members", CLIENT, 200],
    ["client members by a lab", members, "/client/members", OPERATOR, 403],
    ["lab home", labHome, "/lab", LAB, 200],
    ["lab home by an operator", labHome, "/lab", OPERATOR, 200],
    ["lab home by a client", labHome, "/lab", CLIENT, 403],
    ["admin home", adminHome, "/admin", ADMIN, 200],
    ["admin home by a lab manager", adminHome, "/admin", LAB, 403],
    ["admin home by a client", adminHome, "/admin", CLIENT, 403],
    ["admin users by a client", users, "/admin/users", CLIENT, 403],
    ["admin audit log by a lab", auditLog, "/admin/audit-log", LAB, 403],
    ["admin audit log", auditLog, "/admin/audit-log", ADMIN, 200],
    ["lab screen by a client", labInbox, "/lab/inbox", CLIENT, 403],
    ["admin screen by a lab", adminLedger, "/admin/ledger", LAB, 403],
    // No workspace route claims this address, so the catch-all answers it.
    ["unknown client screen", notFoundPage, "/client/nothing-here", CLIENT, 404],
  ];
  for (const [what, fn, path, who, status] of cases) {
    it(`${what} → ${status}`, async () => {
      const answer = await callRoute(fn, getRequest(path, who ? await as(who) : undefined));
      expect(answer.status).toBe(status);
      if (status === 302) expect(answer.headers.get("location")).toBe(`/sign-in?redirectTo=${encodeURIComponent(path)}`);
    });
  }

  it("sends a signed-in person away from the sign-in page", async () => {
    const answer = await callRoute(signInPage, getRequest("/sign-in", await as(CLIENT)));
    expect(answer.status).toBe(302);
    expect(answer.headers.get("location")).toBe("/client");
  });
});
