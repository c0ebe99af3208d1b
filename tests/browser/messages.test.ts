// Messages in a real browser: a lab asks the client a question on an open demo request before quoting, the client
// sees the unread count, answers, and the lab reads the answer (docs/design.md#messages).
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { BASE_URL, clearSignInAttempts, openBrowser, screenshot, signIn, visit, waitForHydration, type Browser } from "./harness";

const TITLE = "Phase purity of NMC811 lot HC-2634";
const QUESTION = "Could you send both NMC811 samples in one sealed pouch, or are they packed separately?";
const ANSWER = "Both go in one argon-filled pouch, each in its own labelled vial.";
let b: Browser;
let requestId: string;

beforeAll(async () => {
  b = await openBrowser();
});
afterEach(() => {
  expect(b.consoleErrors, "console errors in the browser").toEqual([]);
});
afterAll(async () => {
  await b?.close();
  await clearSignInAttempts();
});

async function signInAs(email: string, landing: string) {
  await b.context.clearCookies();
  await signIn(b.page, email);
  await b.page.waitForURL(`${BASE_URL}${landing}`);
}

/** The unread count a workspace's navigation link is described by, or null when it shows none. */
async function unreadBeside(label: string) {
  const link = b.page.getByRole("navigation").getByRole("link", { name: label, exact: true });
  const describedBy = await link.getAttribute("aria-describedby");
  return describedBy ? b.page.locator(`#${describedBy}`).textContent() : null;
}

describe("a question and answer before quoting", () => {
  it("a lab manager asks the client a question on an open request", async () => {
    const page = b.page;
    await signInAs("lab@lakeside.example", "/lab");
    await visit(page, "/lab/quotes");
    await page.getByRole("link", { name: TITLE }).first().click();
    await page.waitForURL(/\/lab\/requests\/[0-9a-f-]+$/);
    requestId = new URL(page.url()).pathname.split("/").pop()!;
    await waitForHydration(page);
    const thread = page.getByRole("region", { name: /^Questions to / });
    await thread.getByText("No messages yet.").waitFor();
    await thread.getByLabel("Your message").fill(QUESTION);
    await thread.getByRole("button", { name: "Send message" }).click();
    await thread.getByText(QUESTION).waitFor();
    expect(await thread.getByLabel("Your message").inputValue()).toBe("");
    await screenshot(page, "messages-lab-question");
  });

  it("the client sees the unread question, reads it and answers", async () => {
    const page = b.page;
    await signInAs("owner@halvorsen.example", "/client");
    expect(await unreadBeside("Requests")).toMatch(/^[1-9]\d* unread messages?$/);
    await visit(page, `/client/requests/${requestId}`);
    const labs = page.getByRole("list", { name: "Conversations by lab" });
    await labs.getByRole("link", { name: /Lakeside Institute X-ray Core/ }).waitFor();
    const thread = page.getByRole("region", { name: "Conversation with Lakeside Institute X-ray Core" });
    await thread.getByText(QUESTION).waitFor();
    // The question is marked new where it is read, and the navigation stops counting it on this very page.
    expect(await thread.textContent()).toContain("1 new");
    await expect.poll(() => unreadBeside("Requests")).toBeNull();
    expect(await thread.textContent()).toContain("Dana Whitford");
    await screenshot(page, "messages-client-unread");
    await thread.getByLabel("Your message").fill(ANSWER);
    await thread.getByRole("button", { name: "Send message" }).click();
    await thread.getByText(ANSWER).waitFor();
    // Read on view: after the answer the request's unread count is gone.
    await visit(page, "/client/requests");
    expect(await unreadBeside("Requests")).toBeNull();
  });

  it("the lab sees the answer, and only its own conversation", async () => {
    const page = b.page;
    await signInAs("lab@lakeside.example", "/lab");
    expect(await unreadBeside("Inbox")).toMatch(/^[1-9]\d* unread messages?$/);
    await visit(page, `/lab/requests/${requestId}`);
    const thread = page.getByRole("region", { name: /^Questions to / });
    await thread.getByText(ANSWER).waitFor();
    expect(await thread.textContent()).toContain(QUESTION);
    // Granite Ridge's demo conversation with the client on the same request is not Lakeside's to read.
    expect(await thread.textContent()).not.toContain("argon? If it has seen air");
    await screenshot(page, "messages-lab-answer");
  });

  it("on an order, the client writes and the order's lab reads it on its order page", async () => {
    const page = b.page;
    const NOTE = "The in-house scan of the same lot shows the shoulder too, so we accept the delivery.";
    await signInAs("owner@halvorsen.example", "/client");
    await visit(page, "/client/requests");
    await page.getByRole("link", { name: "Lattice check of LFP production lot HC-2645" }).click();
    await page.waitForURL(/\/client\/requests\/[0-9a-f-]+/);
    await waitForHydration(page);
    await page.getByRole("link", { name: "Open the order" }).click();
    await page.waitForURL(/\/client\/orders\/[0-9a-f-]+$/);
    const orderPath = new URL(page.url()).pathname;
    await waitForHydration(page);
    const thread = page.getByRole("region", { name: "Messages with Granite Ridge Characterisation" });
    await thread.getByText(/weak shoulder/).waitFor();
    await thread.getByLabel("Your message").fill(NOTE);
    await thread.getByRole("button", { name: "Send message" }).click();
    await thread.getByText(NOTE).waitFor();
    await screenshot(page, "messages-client-order");

    await signInAs("lab@graniteridge.example", "/lab");
    expect(await unreadBeside("Work queue")).toMatch(/^[1-9]\d* unread messages?$/);
    await visit(page, orderPath.replace("/client/", "/lab/"));
    const labThread = page.getByRole("region", { name: "Messages with Halvorsen Cathode Works" });
    await labThread.getByText(NOTE).waitFor();
    await screenshot(page, "messages-lab-order");
  });
});
