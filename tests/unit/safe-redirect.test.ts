// The one parser for redirect targets that come from input (sign-in's redirectTo and the like): only a path on
// this site comes out, normalised the way a browser would read it; everything else is refused (null).
import { describe, expect, it } from "vitest";
import { REDIRECT_MAX_LENGTH, sameSitePath } from "~/utils/safe-redirect";

/** Where a browser on the app's page would go for a Location of this value (Node's URL parses as browsers do). */
const browserGoesTo = (location: string) => new URL(location, "https://app.example/sign-in?redirectTo=x");

describe("sameSitePath", () => {
  it.each([
    ["/client", "/client"],
    ["/client/requests?tab=open&page=2#latest", "/client/requests?tab=open&page=2#latest"],
    ["/invitations/abc_DEF-123", "/invitations/abc_DEF-123"],
    // A query may hold anything; it is data for the page, not a place to go.
    ["/sign-in?redirectTo=//evil.example", "/sign-in?redirectTo=//evil.example"],
    // Dot segments are resolved as a browser would.
    ["/a/../../b", "/b"],
    ["/lab/./orders", "/lab/orders"],
    // Encoded slashes and backslashes stay a path on this site (React Router matches them as text).
    ["/%2F%2Fevil.example", "/%2F%2Fevil.example"],
    ["/%5Cevil.example", "/%5Cevil.example"],
    ["/@evil.example", "/@evil.example"],
    // Non-ASCII comes back percent-encoded, so the Location header is always plain ASCII.
    ["/€", "/%E2%82%AC"],
    ["/labs?q=Zürich", "/labs?q=Z%C3%BCrich"],
    ["/a b", "/a%20b"],
    ["/\u3000/evil.example", "/%E3%80%80/evil.example"],
  ])("keeps %j as %j", (input, expected) => {
    expect(sameSitePath(input)).toBe(expected);
  });

  it.each([
    // The finding: browsers drop tab, CR and LF, so "/\t/evil.example/" is followed as "//evil.example/".
    ["a tab after the slash (the reported attack)", "/\t/evil.example/"],
    ["a CR after the slash", "/\r/evil.example/"],
    ["an LF after the slash", "/\n/evil.example/"],
    ["a header injection", "/client\r\nSet-Cookie: a=b"],
    ["a NUL", "/client\u0000"],
    ["a DEL", "/client\u007f"],
    ["a control character in the fragment", "/client#\u0001"],
    ["a leading tab", "\t/evil.example"],
    // Browsers read "\" as "/" in http(s) URLs.
    ["a backslash after the slash", "/\\evil.example"],
    ["two backslashes", "\\\\evil.example"],
    ["a backslash later in the path", "/client/\\evil"],
    ["a protocol-relative URL", "//evil.example"],
    ["three slashes", "///evil.example"],
    ["a protocol-relative URL with credentials", "//user:pass@evil.example/"],
    ["dot segments that leave //host behind", "/..//evil.example"],
    ["a dot segment that leaves //host behind", "/.//evil.example"],
    ["encoded dot segments that leave //host behind", "/%2e%2e//evil.example"],
    ["an absolute https URL", "https://evil.example/"],
    ["an absolute URL of this very site", "http://diffractory.invalid/client"],
    ["a scheme without slashes", "https:evil.example"],
    ["javascript:", "javascript:alert(document.cookie)"],
    ["JavaScript: in mixed case", "JaVaScRiPt:alert(1)"],
    ["data:", "data:text/html,<script>alert(1)</script>"],
    ["a relative path", "client"],
    ["a leading space", " /client"],
    ["a leading space before //", " //evil.example"],
    ["the empty string", ""],
    ["a path longer than the limit", `/${"a".repeat(REDIRECT_MAX_LENGTH)}`],
  ])("refuses %s", (_what, input) => {
    expect(sameSitePath(input)).toBeNull();
  });

  it("refuses what is not a string", () => {
    for (const value of [undefined, null, 42, ["/client"], { toString: () => "/client" }]) expect(sameSitePath(value)).toBeNull();
  });

  it("whatever it lets through, a browser resolves on this site, and it is printable ASCII", () => {
    const parts = [
      "/",
      "//",
      "\\",
      "\t",
      "\n",
      "\r",
      ".",
      "..",
      "%2e",
      "%2F",
      "%5C",
      "%09",
      "@",
      ":",
      "?",
      "#",
      "a",
      " ",
      "\u0000",
      "€",
      "evil.example",
      "http:",
    ];
    let seed = 7;
    const next = () => {
      seed = (seed * 1_103_515_245 + 12_345) % 2 ** 31;
      return seed;
    };
    let kept = 0;
    for (let n = 0; n < 20_000; n++) {
      let input = "";
      const length = 1 + (next() % 8);
      for (let i = 0; i < length; i++) input += parts[next() % parts.length];
      const out = sameSitePath(input);
      if (out === null) continue;
      kept++;
      expect(out, JSON.stringify(input)).toMatch(/^\/(?![/\\])[\x21-\x7e]*$/);
      expect(browserGoesTo(out).origin, JSON.stringify(input)).toBe("https://app.example");
      // Normalising twice changes nothing.
      expect(sameSitePath(out)).toBe(out);
    }
    expect(kept).toBeGreaterThan(100);
  });
});
