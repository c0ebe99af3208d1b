// The foundation in a real browser: create an account, sign in as each demo role, the 403 page, a 404 inside a workspace, sign out.
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { BASE_URL, clearSignInAttempts, openBrowser, screenshot, signIn, signOut, visit, waitForHydration, type Browser } from "./harness";

let b: Browser;

beforeAll(async () => {
  b = await openBrowser();
});
afterAll(async () => {
  await b?.close();
});
afterEach(async () => {
  expect(b.consoleErrors, "console errors in the browser").toEqual([]);
  b.consoleErrors.length = 0;
  await b.context.clearCookies();
  await clearSignInAttempts();
});

describe("foundation journeys", () => {
  it("shows the public home page saying what Diffractory does", async () => {
    await visit(b.page, "/");
    await b.page.getByRole("heading", { level: 1 }).waitFor();
    expect(await b.page.textContent("h1")).toContain("without owning a diffractometer");
    await screenshot(b.page, "public-home");
  });

  it("creates a client account and lands in the new organisation's workspace", async () => {
    await visit(b.page, "/create-account");
    await b.page.getByLabel("A client organisation").check();
    await b.page.getByLabel("Your name").fill("Wren Albury");
    await b.page.getByLabel("E-mail").fill("wren@saltmarsh-pigments.example");
    await b.page.getByLabel("Password").fill("saltmarsh-pigments-2026");
    await b.page.getByLabel("Organisation name").fill("Saltmarsh Pigments");
    await b.page.getByRole("button", { name: "Create account" }).click();
    await b.page.waitForURL(`${BASE_URL}/client`);
    await b.page.getByRole("heading", { name: "Saltmarsh Pigments" }).waitFor();
    expect(await b.page.getByRole("status").textContent()).toContain("Saltmarsh Pigments is ready");
    await screenshot(b.page, "create-account-client-workspace");
    await signOut(b.page);
  });

  it("shows field errors for a bad new account without leaving the page", async () => {
    await visit(b.page, "/create-account");
    await b.page.getByLabel("A lab").check();
    await b.page.getByLabel("E-mail").fill("not-an-email");
    await b.page.getByRole("button", { name: "Create account" }).click();
    await b.page.getByText("Enter a valid e-mail address.").waitFor();
    await b.page.getByText("Labs give the city of their instruments.").waitFor();
    expect(b.page.url()).toBe(`${BASE_URL}/create-account`);
    await screenshot(b.page, "create-account-errors");
  });

  const roles = [
    { email: "owner@halvorsen.example", path: "/client", title: "Client workspace", heading: "Halvorsen Cathode Works" },
    { email: "lab@graniteridge.example", path: "/lab", title: "Lab workspace", heading: "Granite Ridge Characterisation" },
    { email: "admin@diffractory.example", path: "/admin", title: "Admin", heading: "Platform overview" },
  ];
  for (const role of roles) {
    it(`signs in as ${role.email} and sees the ${role.title.toLowerCase()}`, async () => {
      await signIn(b.page, role.email);
      await b.page.waitForURL(`${BASE_URL}${role.path}`);
      await waitForHydration(b.page);
      expect(await b.page.getByTestId("workspace-title").textContent()).toBe(role.title);
      await b.page.getByRole("heading", { name: role.heading }).waitFor();
      await screenshot(b.page, `workspace-${role.path.slice(1)}`);
      await signOut(b.page);
      await b.page.getByRole("status").filter({ hasText: "You are signed out." }).waitFor();
    });
  }

  it("shows the 403 page when the lab manager opens an admin page", async () => {
    await signIn(b.page, "lab@graniteridge.example");
    await b.page.waitForURL(`${BASE_URL}/lab`);
    const response = await b.page.goto("/admin");
    expect(response?.status()).toBe(403);
    await b.page.getByRole("heading", { name: "No access" }).waitFor();
    expect(await b.page.textContent("main")).toContain("This page is for platform admins.");
    await screenshot(b.page, "forbidden-admin-for-lab");
  });

  it("answers an order that is not there inside the client workspace, with its navigation", async () => {
    await signIn(b.page, "owner@halvorsen.example");
    await b.page.waitForURL(`${BASE_URL}/client`);
    const response = await b.page.goto("/client/orders/00000000-0000-4000-8000-000000000000");
    expect(response?.status()).toBe(404);
    await waitForHydration(b.page);
    await b.page.getByRole("heading", { name: "Not found" }).waitFor();
    expect(await b.page.textContent("main")).toContain("No such order in your organisation.");
    expect(await b.page.getByTestId("workspace-title").textContent()).toBe("Client workspace");
    await screenshot(b.page, "not-found-order-in-client-workspace");
    const nav = b.page.getByRole("navigation", { name: "Client workspace navigation" });
    await nav.getByRole("link", { name: "Orders", exact: true }).click();
    await b.page.waitForURL(`${BASE_URL}/client/orders`);
    await b.page.getByRole("heading", { name: "Orders", exact: true }).waitFor();
  });

  it("keeps a wrong password out with a field error and no session, and stops the sixth failure", async () => {
    await visit(b.page, "/sign-in");
    for (let i = 1; i <= 5; i++) {
      await b.page.getByLabel("E-mail").fill("owner@pinecrest.example");
      await b.page.getByLabel("Password").fill(`wrong-password-${i}`);
      await b.page.getByRole("button", { name: "Sign in" }).click();
      await b.page.getByText("The e-mail or password is not right.").waitFor();
      const cookies = await b.context.cookies();
      expect(cookies.find((c) => c.name === "diffractory_session")).toBeUndefined();
    }
    await screenshot(b.page, "sign-in-wrong-password");
    await b.page.getByLabel("E-mail").fill("owner@pinecrest.example");
    await b.page.getByLabel("Password").fill("diffractory-demo");
    await b.page.getByRole("button", { name: "Sign in" }).click();
    await b.page.getByText("Too many failed sign-in attempts").waitFor();
    expect(b.page.url()).toContain("/sign-in");
    await screenshot(b.page, "sign-in-too-many-attempts");
  });

  it("sends a signed-out visitor of a workspace to sign in and back", async () => {
    await b.page.goto("/client/members");
    await b.page.waitForURL(/\/sign-in\?redirectTo=%2Fclient%2Fmembers/);
    await waitForHydration(b.page);
    await b.page.getByLabel("E-mail").fill("owner@halvorsen.example");
    await b.page.getByLabel("Password").fill("diffractory-demo");
    await b.page.getByRole("button", { name: "Sign in" }).click();
    await b.page.waitForURL(`${BASE_URL}/client/members`);
    await b.page.getByRole("cell", { name: "member@halvorsen.example" }).waitFor();
  });
});
