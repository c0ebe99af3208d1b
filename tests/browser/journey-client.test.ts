// The client's whole journey in a real browser, through the screens only: sign in, find labs in the directory,
// post a request with a hazardous sample and its safety data sheet (the first wizard step by keyboard alone),
// compare the labs' quotes side by side and accept one, pay on the provider's card page, ship, follow the
// lattice check live while the lab measures and delivers, open the plot, accept the delivery and share the
// result with a colleague (a share link and a member of the same organisation). A second browser is the labs.
// Every screen the client visits gets axe-core's WCAG 2.1 A/AA check; screenshots go to
// test-results/screenshots/journey-client/NN-step.png.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import pg from "pg";
import type { Page } from "playwright-core";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { MINIMAL_PDF, simulatedXy } from "./test-files";
import { ZINCITE } from "~/diffraction/structures";
import type { Radiation } from "~/diffraction";
import { databaseUrl } from "../../services/postgres";
import { checkAccessibility, focusedElement, tabTo } from "./a11y";
import { BASE_URL, openBrowser, screenshot, signIn, visit, waitForHydration, type Browser } from "./harness";

// A title of its own, so nothing of the shared demo data is touched.
const TITLE = `Zinc oxide nanopowder lot ZO-12 (journey ${Date.now().toString(36)})`;
const SAMPLE = "ZO-12";
const SDS = "zo-12-sds.pdf";
const SCAN = "zo-12_scan.xy";

let client: Browser; // owner@halvorsen.example
let lab: Browser; // the lab managers, one after the other
let colleague: Browser | undefined; // a share link's visitor, then a member of Halvorsen
let dir = "";
let requestPath = "";
let orderId = "";
let step = 0;

/** Screenshot named NN-step under journey-client/, numbered in the order the journey takes them. */
async function shot(page: Page, name: string) {
  step += 1;
  await screenshot(page, `journey-client/${String(step).padStart(2, "0")}-${name}`);
}

async function dbQuery<T = Record<string, unknown>>(sql: string, values: unknown[] = []): Promise<T[]> {
  const c = new pg.Client({ connectionString: databaseUrl("diffractory_browser") });
  await c.connect();
  try {
    return (await c.query(sql, values)).rows as T[];
  } finally {
    await c.end();
  }
}

/**
 * A state badge carries its word and a shape next to the colour: finds the badge with `word` inside `scope`
 * and checks it has an aria-hidden shape (a character or an icon) beside the visible word.
 */
async function expectBadge(page: Page, word: string | string[], scope = "body") {
  const words = Array.isArray(word) ? word : [word];
  const found = await page.evaluate(
    ({ words, scope }) => {
      const root = document.querySelector(scope) ?? document.body;
      const candidates = [...root.querySelectorAll<HTMLElement>("span, strong, div")].filter((el) => {
        const shape = [...el.children].find((c) => c.getAttribute("aria-hidden") === "true");
        if (!shape) return false;
        const hasShape = (shape.textContent ?? "").trim().length > 0 || shape.querySelector("svg, path") !== null || shape.tagName.toLowerCase() === "svg";
        const text = [...el.childNodes]
          .filter((n) => n !== shape)
          .map((n) => n.textContent ?? "")
          .join("")
          .trim();
        return hasShape && words.includes(text);
      });
      return candidates.map((el) => ({ text: el.innerText.trim(), visible: el.offsetParent !== null }));
    },
    { words, scope },
  );
  expect(
    found.filter((f) => f.visible),
    `a visible "${words.join('" or "')}" badge with a shape`,
  ).not.toHaveLength(0);
}

async function signInAs(b: Browser, email: string, landing: string) {
  await b.context.clearCookies();
  await signIn(b.page, email);
  await b.page.waitForURL(`${BASE_URL}${landing}`);
  await waitForHydration(b.page);
}

/** A simulated zinc-oxide scan for the quote's instrument, as the lab's diffractometer would write it. */
function writeScan(radiation: Radiation) {
  const file = path.join(dir, SCAN);
  fs.writeFileSync(
    file,
    simulatedXy("Zinc oxide lot ZO-12 (simulated)", {
      structure: ZINCITE,
      cell: { a: 3.2501, b: 3.2501, c: 5.2071, alpha: 90, beta: 90, gamma: 120 },
      radiation,
      from: 20,
      to: 120,
      background: 140,
      slope: -0.3,
      seed: 12,
    }),
  );
  return file;
}

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), "diffractory-journey-client-"));
  fs.writeFileSync(path.join(dir, SDS), MINIMAL_PDF);
  [client, lab] = await Promise.all([openBrowser(), openBrowser()]);
  // Name the screen a page error came from, next to the harness's list of messages.
  for (const [who, b] of [
    ["client", client],
    ["lab", lab],
  ] as const)
    b.page.on("pageerror", (e) => console.info(`${who} page error on ${b.page.url()}: ${e.message.slice(0, 120)}`));
});
afterEach(() => {
  // Each test answers for its own console errors (the lists are emptied after the check).
  const errors = { client: client.consoleErrors.splice(0), lab: lab.consoleErrors.splice(0), colleague: colleague?.consoleErrors.splice(0) ?? [] };
  expect(errors.client, "console errors in the client's browser").toEqual([]);
  expect(errors.lab, "console errors in the lab's browser").toEqual([]);
  expect(errors.colleague, "console errors in the colleague's browser").toEqual([]);
});
afterAll(async () => {
  await Promise.all([client?.close(), lab?.close(), colleague?.close()]);
  if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

describe("the client's journey", () => {
  it("signs in and finds labs in the directory with filters", async () => {
    const page = client.page;
    await visit(page, "/sign-in");
    await page.getByLabel("E-mail").fill("owner@halvorsen.example");
    await page.getByLabel("Password").fill("diffractory-demo");
    await checkAccessibility(page, "client-sign-in");
    await shot(page, "sign-in");
    await page.getByRole("button", { name: "Sign in" }).click();
    await page.waitForURL(`${BASE_URL}/client`);
    await waitForHydration(page);
    await checkAccessibility(page, "client-home");
    await shot(page, "client-home");

    await page.getByRole("link", { name: "Find a lab" }).first().click();
    await page.waitForURL(`${BASE_URL}/labs`);
    await waitForHydration(page);
    await page.getByRole("heading", { name: "Granite Ridge Characterisation" }).waitFor();
    await checkAccessibility(page, "client-directory");
    await shot(page, "directory");
    // The sample will carry GHS09: only labs that accept it, with a copper tube.
    // The box follows the URL (the filters live there), so it shows checked once the URL has it.
    await page.getByLabel("GHS09 environment").click();
    await page.waitForURL(/hazard=GHS09/);
    // The URL changes first; the box is checked once the page has rendered the navigation's answer.
    await expect.poll(() => page.getByLabel("GHS09 environment").isChecked(), { timeout: 10_000 }).toBe(true);
    await page.getByLabel("Source (anode)").selectOption("Cu");
    await page.waitForURL(/source=Cu/);
    await page.getByRole("status").filter({ hasText: "1 lab" }).waitFor();
    expect(await page.getByRole("region", { name: "Labs" }).getByRole("heading", { level: 2 }).allTextContents()).toEqual(["Granite Ridge Characterisation"]);
    await checkAccessibility(page, "client-directory-filtered");
    await shot(page, "directory-filtered");
    await page.getByRole("link", { name: "Granite Ridge Characterisation" }).click();
    await page.getByRole("heading", { name: "Instruments" }).waitFor();
    await waitForHydration(page);
    await checkAccessibility(page, "client-lab-profile");
    await shot(page, "lab-profile");
  });

  it("posts a request with a hazardous sample and its safety data sheet, the first step by keyboard alone", async () => {
    const page = client.page;
    await visit(page, "/client/requests");
    await page.getByRole("heading", { name: "Requests", level: 1 }).waitFor();
    await checkAccessibility(page, "client-requests");
    await shot(page, "requests");
    await page.getByRole("link", { name: "New request" }).click();
    await page.waitForURL(`${BASE_URL}/client/requests/new`);
    await waitForHydration(page);
    await checkAccessibility(page, "client-request-samples");

    // Keyboard alone: Tab from the top of the page to each control, type, and check the focus ring on every
    // element Tab passes through.
    await page.evaluate(() => (document.activeElement as HTMLElement | null)?.blur());
    const reached: NonNullable<Awaited<ReturnType<typeof focusedElement>>>[] = [];
    const tabToField = async (name: string) => {
      const { found, passed } = await tabTo(page, (f) => f.name === name);
      for (const p of passed) if (p) reached.push(p);
      return found;
    };
    const typeInto = async (name: string, text: string) => {
      await tabToField(name);
      await page.keyboard.press("ControlOrMeta+A");
      await page.keyboard.type(text);
    };
    await typeInto("title", TITLE);
    await typeInto("samples[0].label", SAMPLE);
    await typeInto("samples[0].formula", "ZnO");
    await typeInto("samples[0].massMg", "300");
    await typeInto("samples[0].expectedPhase", "zincite ZnO");
    // A closed select takes the typed letters (type-ahead), as a person does.
    await tabToField("samples[0].crystalSystem");
    await page.keyboard.type("hex");
    await tabToField("samples[0].centering");
    await page.keyboard.type("P");
    for (const [name, value] of [
      ["cellA", "3.25"],
      ["cellB", "3.25"],
      ["cellC", "5.207"],
      ["cellAlpha", "90"],
      ["cellBeta", "90"],
      ["cellGamma", "120"],
    ]) {
      await typeInto(`samples[0].${name}`, value);
    }
    // Shift+Tab goes back one control, Tab comes forward again.
    await page.keyboard.press("Shift+Tab");
    expect((await focusedElement(page))?.name).toBe("samples[0].cellBeta");
    await page.keyboard.press("Tab");
    expect((await focusedElement(page))?.name).toBe("samples[0].cellGamma");
    expect(await page.getByLabel("Crystal system").inputValue()).toBe("hexagonal");
    expect(await page.getByLabel("Centering").inputValue()).toBe("P");
    const submit = await tabTo(page, (f) => f.tag === "button" && f.text === "Save and continue to hazards");
    for (const p of submit.passed) if (p) reached.push(p);
    const withoutRing = reached.filter((f) => !f.visibleFocus).map((f) => `${f.tag} ${f.name ?? f.text}`);
    expect(withoutRing, "every control reached by Tab shows a focus ring").toEqual([]);
    expect(reached.length).toBeGreaterThan(14);
    await shot(page, "wizard-samples-by-keyboard");
    await page.keyboard.press("Enter");
    await page.waitForURL(/\/edit\/hazards$/);
    requestPath = new URL(page.url()).pathname.replace(/\/edit\/hazards$/, "");
    await waitForHydration(page);

    await page.getByRole("complementary", { name: "Safety notice" }).first().waitFor();
    await page.getByLabel(`GHS09 Environment (${SAMPLE})`).check();
    await page.getByLabel(`H-statements of ${SAMPLE}`).fill("H400, H410");
    await page.getByLabel(`Safety data sheet of ${SAMPLE} (PDF)`).setInputFiles(path.join(dir, SDS));
    await page.getByText(`✓ ${SDS} uploaded`).waitFor();
    await checkAccessibility(page, "client-request-hazards");
    await shot(page, "wizard-hazards");
    await page.getByRole("button", { name: "Save and continue to measurement" }).click();
    await page.waitForURL(/\/edit\/measurement$/);
    await waitForHydration(page);

    await page.getByLabel("Deadline").fill("2099-09-30");
    await page.getByLabel("Budget (optional)").fill("800");
    await checkAccessibility(page, "client-request-measurement");
    await shot(page, "wizard-measurement");
    await page.getByRole("button", { name: "Save and continue to labs" }).click();
    await page.waitForURL(/\/edit\/labs$/);
    await waitForHydration(page);

    await page.getByRole("heading", { name: "Granite Ridge Characterisation" }).waitFor();
    // Only the two labs the client picked see the request, fitting or not.
    await page.getByRole("radio", { name: /Invited labs only/ }).check();
    await page.getByLabel("Invite Granite Ridge Characterisation").check();
    await page.getByLabel("Invite Lakeside Institute X-ray Core").check();
    await checkAccessibility(page, "client-request-labs");
    await shot(page, "wizard-labs");
    await page.getByRole("button", { name: "Save and continue to review" }).click();
    await page.waitForURL(/\/edit\/review$/);
    await waitForHydration(page);

    await page.getByText(SDS).first().waitFor();
    await checkAccessibility(page, "client-request-review");
    await shot(page, "wizard-review");
    await page.getByRole("button", { name: "Publish request" }).click();
    await page.waitForURL(`${BASE_URL}${requestPath}`);
    await waitForHydration(page);
    await page.getByRole("status").filter({ hasText: "is open" }).first().waitFor();
    await page.getByText("No quotes yet").waitFor();
    await checkAccessibility(page, "client-request-open");
    await shot(page, "request-published");
  });

  it("two labs acknowledge the hazard declaration and quote (the second browser)", async () => {
    const page = lab.page;
    const requestId = requestPath.split("/").pop()!;
    await signInAs(lab, "lab@graniteridge.example", "/lab");
    await visit(page, "/lab/inbox");
    await page.getByRole("link", { name: TITLE }).click();
    await page.waitForURL(`${BASE_URL}/lab/requests/${requestId}`);
    await waitForHydration(page);
    await page.getByRole("img", { name: "GHS09 Environment" }).first().waitFor();
    await page.getByRole("link", { name: SDS }).waitFor();
    await page.getByRole("button", { name: "Acknowledge hazard declaration" }).click();
    await page.getByRole("region", { name: "Quote builder" }).waitFor();
    await waitForHydration(page);
    await page.getByLabel("Item 1 unit price").fill("165.00");
    await page.getByLabel("Notes for the client").fill("Includes return of the sample in its sealed container.");
    await shot(page, "lab-granite-quote");
    await page.getByRole("button", { name: "Send quote" }).click();
    await page.getByText("Quote sent to the client.").waitFor();

    await signInAs(lab, "lab@lakeside.example", "/lab");
    await visit(page, "/lab/inbox");
    await page.getByRole("link", { name: TITLE }).click();
    await page.waitForURL(`${BASE_URL}/lab/requests/${requestId}`);
    await waitForHydration(page);
    await page.getByRole("button", { name: "Acknowledge hazard declaration" }).click();
    await page.getByRole("region", { name: "Quote builder" }).waitFor();
    await waitForHydration(page);
    await page.getByLabel("Turnaround (days)").fill("6");
    await page.getByRole("button", { name: "Send quote" }).click();
    await page.getByText("Quote sent to the client.").waitFor();
    await shot(page, "lab-lakeside-quote-sent");
  });

  it("the client compares the quotes side by side, accepts one and pays with the success card", async () => {
    const page = client.page;
    await visit(page, requestPath);
    const granite = page.getByRole("article", { name: "Quote from Granite Ridge Characterisation" });
    const lakeside = page.getByRole("article", { name: "Quote from Lakeside Institute X-ray Core" });
    await granite.waitFor();
    await lakeside.waitFor();
    for (const part of ["Turnaround", "Instrument", "Source", "Valid until", "GHS09"]) {
      expect(await granite.textContent()).toContain(part);
      expect(await lakeside.textContent()).toContain(part);
    }
    expect(await lakeside.textContent()).toContain("6 days");
    await checkAccessibility(page, "client-request-quotes");
    await shot(page, "quotes-side-by-side");

    // The acceptance by keyboard too: Tab to the button and press Space.
    await page.evaluate(() => (document.activeElement as HTMLElement | null)?.blur());
    const accept = await tabTo(page, (f) => f.tag === "button" && f.text === "Accept Granite Ridge Characterisation's quote", 120);
    expect(accept.found.visibleFocus, "the accept button shows a focus ring").toBe(true);
    await page.keyboard.press("Space");
    await page.waitForURL(/\/client\/orders\/[0-9a-f-]+$/);
    orderId = new URL(page.url()).pathname.split("/").pop()!;
    await waitForHydration(page);
    await page.getByText("Quote accepted. The order is awaiting payment").waitFor();
    await expectBadge(page, "Awaiting payment");
    await checkAccessibility(page, "client-order-awaiting-payment");
    await shot(page, "order-awaiting-payment");

    await page.getByRole("button", { name: /^Pay / }).click();
    await page.waitForURL(/127\.0\.0\.1:54332\/pay\//);
    await page.getByLabel("Card number").fill("4242424242424242");
    await page.getByLabel(/Expiry/).fill("12/34");
    await page.getByLabel(/CVC/).fill("123");
    // The provider's card page is the payment fake's stand-in, not a Diffractory screen: no axe check here.
    await shot(page, "payment-card-page");
    await page.getByRole("button", { name: /^Pay/ }).click();
    await page.waitForURL(`${BASE_URL}/client/orders/${orderId}`);
    await waitForHydration(page);
    await page.getByText("Payment received. The money is held until you accept the delivery.").waitFor();
    await expectBadge(page, "Funds held");
    await checkAccessibility(page, "client-order-funds-held");
    await shot(page, "order-funds-held");
  });

  it("ships the samples", async () => {
    const page = client.page;
    await page.getByRole("link", { name: "Packing slip" }).click();
    await page.waitForURL(`${BASE_URL}/client/orders/${orderId}/packing-slip`);
    await waitForHydration(page);
    await page.getByText(SAMPLE).first().waitFor();
    // The slip names the order by its number, which the lab reads off the parcel (docs/design.md#order-numbers).
    await page.getByText(/^HCW-\d{4}-\d{4,}$/).waitFor();
    await checkAccessibility(page, "client-packing-slip");
    await shot(page, "packing-slip");
    await visit(page, `/client/orders/${orderId}`);
    await page.getByLabel("Carrier").fill("Nordpost Express");
    await page.getByLabel("Tracking number").fill("NP 4471 2093");
    await page.getByRole("button", { name: "Mark samples shipped" }).click();
    await page.getByText("Marked shipped. The lab checks the parcel against its declaration on arrival.").waitFor();
    await expectBadge(page, "Samples in transit");
    await checkAccessibility(page, "client-order-in-transit");
    await shot(page, "samples-shipped");
  });

  it("follows the lab's work and the lattice check in the data room without reloading", async () => {
    const page = lab.page;
    await signInAs(lab, "lab@graniteridge.example", "/lab");
    await visit(page, "/lab/work-queue");
    await page.getByRole("link", { name: TITLE }).first().click();
    await page.waitForURL(`${BASE_URL}/lab/orders/${orderId}`);
    await waitForHydration(page);
    await page.getByText("Shipped with Nordpost Express, tracking NP 4471 2093.", { exact: false }).first().waitFor();
    await page.getByRole("button", { name: "Mark samples received" }).click();
    await page.getByRole("button", { name: "Start measuring" }).click();
    await page.getByRole("link", { name: "Upload delivery files" }).waitFor();
    await shot(page, "lab-measuring");

    // The client opens the data room while the lab measures; from here on the page is never reloaded.
    const cp = client.page;
    await visit(cp, `/client/orders/${orderId}`);
    await expectBadge(cp, "Measuring");
    await checkAccessibility(cp, "client-order-measuring");
    await cp.getByRole("link", { name: "Open the data room" }).click();
    await cp.waitForURL(`${BASE_URL}/client/data-room/${orderId}`);
    await waitForHydration(cp);
    await cp.getByText("No files delivered yet").waitFor();
    await expectBadge(cp, "Measuring");
    await checkAccessibility(cp, "client-data-room-waiting");
    await shot(cp, "data-room-waiting");
    await cp.evaluate(() => {
      const w = window as unknown as { journeyMarker: number; seen: string[] };
      w.journeyMarker = 7;
      w.seen = [];
      new MutationObserver(() => {
        for (const el of document.querySelectorAll<HTMLElement>('[data-testid="check-status"]')) {
          const s = el.dataset.status ?? "";
          if (w.seen.at(-1) !== s) w.seen.push(s);
        }
      }).observe(document.body, { subtree: true, childList: true, attributes: true, attributeFilter: ["data-status"] });
    });

    // The lab uploads a scan simulated for the quote's own instrument.
    const [instrument] = await dbQuery<{ anode: Radiation extends { anode: infer A } ? A : never; monochromation: string; name: string }>(
      "select i.anode, i.monochromation, i.name from orders o join quotes q on q.id = o.quote_id join instruments i on i.id = q.instrument_id where o.id = $1",
      [orderId],
    );
    const scan = writeScan({ kind: "anode", anode: instrument.anode, monochromation: instrument.monochromation } as Radiation);
    await page.getByRole("link", { name: "Upload delivery files" }).click();
    await page.waitForURL(`${BASE_URL}/lab/orders/${orderId}/files`);
    await waitForHydration(page);
    await page.getByLabel("Choose files to deliver").setInputFiles(scan);
    await page.getByLabel(`Sample for ${SCAN}`).selectOption({ label: SAMPLE });
    await page.getByRole("button", { name: "Upload 1 file" }).click();
    await page.locator(`[data-upload="${SCAN}"]`).getByText("Stored and verified as version 1.").waitFor({ timeout: 30_000 });
    await shot(page, "lab-scan-stored");

    // The client's open page shows the file arrive and its check reach a verdict.
    const row = cp.locator(`[data-file-row="${SCAN} v1"]`);
    await row.waitFor({ timeout: 20_000 });
    await row.locator('[data-testid="check-status"][data-status="done"]').waitFor({ timeout: 45_000 });
    // The verdict is a word in the link to the check screen, not only the badge's colour.
    await row.getByRole("link", { name: "Consistent Open check" }).waitFor();
    await expectBadge(cp, "Consistent", `[data-file-row="${SCAN} v1"]`);
    const followed = await cp.evaluate(() => {
      const w = window as unknown as { journeyMarker?: number; seen: string[] };
      return { journeyMarker: w.journeyMarker, seen: w.seen };
    });
    console.info(`check states the client's open page showed: ${followed.seen.join(" → ")}`);
    expect(followed.journeyMarker, "the data room was not reloaded").toBe(7);
    expect(followed.seen.at(-1)).toBe("done");
    await checkAccessibility(cp, "client-data-room-checked");
    await shot(cp, "data-room-check-followed");

    // The lab delivers; the client's page shows the new state without a reload too.
    await visit(page, `/lab/orders/${orderId}`);
    await page.getByRole("button", { name: "Mark data delivered" }).click();
    await page.getByText("Delivered. The client reviews the data").waitFor();
    await shot(page, "lab-delivered");
    await cp.getByText("Data delivered").first().waitFor({ timeout: 20_000 });
    await expectBadge(cp, "Data delivered");
    expect(await cp.evaluate(() => (window as unknown as { journeyMarker?: number }).journeyMarker)).toBe(7);
  });

  it("opens the check with its plot and accepts the delivery", async () => {
    const page = client.page;
    await page.locator(`[data-file-row="${SCAN} v1"]`).getByRole("link", { name: "Consistent Open check" }).click();
    await page.waitForURL(/\/checks\/[0-9a-f-]+$/);
    await waitForHydration(page);
    await page.getByRole("heading", { name: `Lattice check of ${SCAN}` }).waitFor();
    expect(await page.getByTestId("verdict").textContent()).toContain("Consistent");
    await expectBadge(page, "Consistent", '[data-testid="verdict"]');
    await page.getByText("The scan confirms the declared cell.").waitFor();
    await page.locator('[data-testid="check-plot"][data-ready="true"] canvas').first().waitFor();
    // The peaks are folded under the summary and paged (docs/design-system.md, the check page): open them.
    await page.getByTestId("peaks-details").locator("summary").click();
    expect(await page.getByRole("table", { name: "Fitted peaks with their Miller indices" }).locator("tbody tr").count()).toBeGreaterThan(10);
    await checkAccessibility(page, "client-check");
    await shot(page, "check-with-plot");

    await page.getByRole("link", { name: /Back to the order's files/ }).click();
    await page.waitForURL(`${BASE_URL}/client/data-room/${orderId}`);
    // The data room names the order by its number (docs/design.md#order-numbers), never by its id.
    await page.getByRole("link", { name: /^Order HCW-\d{4}-\d{4,}$/ }).click();
    await page.waitForURL(`${BASE_URL}/client/orders/${orderId}`);
    await waitForHydration(page);
    await expectBadge(page, "Data delivered");
    await checkAccessibility(page, "client-order-delivered");
    await shot(page, "order-delivered");
    await page.getByRole("button", { name: "Accept delivery" }).click();
    await page
      .getByText(/Delivery accepted; the lab is being paid\.|The delivery is accepted/)
      .first()
      .waitFor();
    const state = (await dbQuery<{ state: string }>("select state from orders where id = $1", [orderId]))[0].state;
    expect(["accepted", "paid_out"]).toContain(state);
    // The payout may already have gone through by the time the page is drawn.
    await expectBadge(page, ["Delivery accepted", "Lab paid"]);
    await checkAccessibility(page, "client-order-accepted");
    await shot(page, "delivery-accepted");
  });

  it("shares the result with a colleague: a share link, and a member of the organisation in the data room", async () => {
    const page = client.page;
    await page.getByRole("link", { name: "Data room", exact: true }).first().click();
    await page.waitForURL(`${BASE_URL}/client/data-room`);
    await waitForHydration(page);
    await checkAccessibility(page, "client-data-room-list");
    await shot(page, "data-room-list");
    await page.getByRole("link", { name: TITLE }).click();
    await page.waitForURL(`${BASE_URL}/client/data-room/${orderId}`);
    await waitForHydration(page);
    await page.getByLabel("Who it is for").fill("Dr. Ilse Marquardt, coating supplier");
    await page.getByLabel("Valid for (days)").fill("7");
    await page.getByRole("button", { name: "Create share link" }).click();
    const linkBox = page.getByLabel("New share link");
    await linkBox.waitFor();
    const link = new URL(await linkBox.inputValue());
    await checkAccessibility(page, "client-data-room-share-link");
    await shot(page, "share-link-created");

    colleague = await openBrowser();
    await visit(colleague.page, link.pathname);
    await colleague.page.getByRole("heading", { name: TITLE }).waitFor();
    await colleague.page.getByRole("link", { name: `Download ${SCAN} v1` }).waitFor();
    await expectBadge(colleague.page, "Consistent");
    await checkAccessibility(colleague.page, "client-shared-data-room");
    await shot(colleague.page, "shared-data-room");

    // A member of Halvorsen signs in and finds the order and its check in the organisation's data room.
    await signInAs(colleague, "member@halvorsen.example", "/client");
    await visit(colleague.page, "/client/data-room");
    await colleague.page.getByRole("link", { name: TITLE }).click();
    await colleague.page.waitForURL(`${BASE_URL}/client/data-room/${orderId}`);
    await waitForHydration(colleague.page);
    await colleague.page.locator(`[data-file-row="${SCAN} v1"]`).getByRole("link", { name: "Consistent Open check" }).waitFor();
    await checkAccessibility(colleague.page, "client-colleague-data-room");
    await shot(colleague.page, "colleague-data-room");
  });
});
