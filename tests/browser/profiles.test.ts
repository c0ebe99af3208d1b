// Profiles in a real browser: a client owner fills the organisation's profile with a Dutch VAT number (one of the
// wrong shape is refused on its field, the right one saved); the lab manager adds a receiving address with its
// contact and opening hours as the default; the client's packing slip and parcel label then carry it.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { openBrowser, query, screenshot, signIn, visit, waitForHydration, type Browser } from "./harness";

const RUN = Date.now().toString(36).slice(-5).toUpperCase();
const RECEPTION = `Powder reception ${RUN}`;
let lab: Browser;
let client: Browser;
let orderId = "";

beforeAll(async () => {
  // A Pinecrest order at Granite Ridge from the demo (the nano-milled API parcel on its way).
  const [row] = await query<{ id: string }>(
    "select o.id from orders o join requests r on r.id = o.request_id where r.title = 'Polymorph screen of nano-milled API PSF-152'",
  );
  orderId = row.id;
  lab = await openBrowser();
  client = await openBrowser();
  await signIn(lab.page, "lab@graniteridge.example");
  await lab.page.waitForURL(/\/lab$/);
  await signIn(client.page, "owner@pinecrest.example");
  await client.page.waitForURL(/\/client$/);
}, 120_000);

afterAll(async () => {
  await lab?.close();
  await client?.close();
});

describe("profiles", () => {
  it("a client owner saves a VAT number after one of the wrong shape is refused", async () => {
    const page = client.page;
    await visit(page, "/client/profile");
    const form = page.locator("form#profile");
    await form.getByLabel("Legal name").fill("Pinecrest Solid Forms B.V.");
    await form.getByLabel("Billing address: street and number").fill("Wilgenkade 21");
    await form.getByLabel("Postcode").fill("9999 ZZ");
    await form.getByLabel("City", { exact: true }).fill("Zilverhaven");
    await form.getByLabel("Country").selectOption("NL");
    await form.getByLabel("Invoice e-mail").fill("facturen@pinecrest.example");
    // The Dutch format is NL, 9 digits, B and 2 digits (VIES number formats, from memory): the B01 is missing.
    await form.getByLabel("Tax id").fill("NL123456789");
    await form.getByRole("button", { name: "Save profile" }).click();
    await page.getByText("A Dutch VAT number is NL followed by 9 digits, the letter B and 2 digits, e.g. NL123456789B01.").waitFor();
    expect((await query<{ tax_id: string | null }>("select tax_id from organisations where slug = 'pinecrest-solid-forms'"))[0].tax_id).not.toBe("NL123456789");
    await form.getByLabel("Tax id").fill("nl 1234.56.789.b.01");
    await form.getByRole("button", { name: "Save profile" }).click();
    await page.getByText("Profile saved.").waitFor();
    await waitForHydration(page);
    expect(await page.locator("form#profile").getByLabel("Tax id").inputValue()).toBe("NL123456789B01");
    await page.getByTestId("client-kind-status").getByText("awaiting confirmation").waitFor();
    await screenshot(page, "profiles-client");
    expect(client.consoleErrors).toEqual([]);
  });

  it("a lab manager adds a receiving address, and the client's packing slip shows it", async () => {
    const page = lab.page;
    await visit(page, "/lab/profile");
    await page.getByText("Add an address").click();
    const form = page.getByRole("form", { name: "New address" });
    await form.getByLabel("Kind", { exact: true }).selectOption("receiving");
    await form.getByLabel("Name of the address").fill(RECEPTION);
    await form.getByLabel("Street and number").fill("412 Quarrystone Avenue, door C");
    await form.getByLabel("Postcode").fill("X0E 1B7");
    await form.getByLabel("City", { exact: true }).fill("Granite Falls");
    await form.getByLabel("Country").selectOption("CA");
    await form.getByLabel("Contact person").fill("Priya Castellanos");
    await form.getByLabel("Contact phone").fill("+1 867 555 0199");
    await form.getByLabel("Opening hours").fill("Tue–Thu 10:00–14:00");
    await form.getByLabel("The default address of its kind").check();
    await form.getByRole("button", { name: "Add address" }).click();
    await page.getByText(`Address “${RECEPTION}” added.`).waitFor();
    await page.getByTestId("profile-address").filter({ hasText: RECEPTION }).getByText("default receiving").waitFor();
    await screenshot(page, "profiles-lab");
    expect(lab.consoleErrors).toEqual([]);

    await visit(client.page, `/client/orders/${orderId}/packing-slip`);
    const label = client.page.getByRole("region", { name: /Parcel label/ });
    await label.getByText("412 Quarrystone Avenue, door C").waitFor();
    await label.getByText("Contact: Priya Castellanos, +1 867 555 0199").waitFor();
    await label.getByText("Parcels taken in: Tue–Thu 10:00–14:00").waitFor();
    // The sender: Pinecrest's shipping address from the demo.
    await label.getByText("7 Larchmere Row, unit 3").waitFor();
    await screenshot(client.page, "profiles-packing-slip");
    expect(client.consoleErrors).toEqual([]);
  });
});
