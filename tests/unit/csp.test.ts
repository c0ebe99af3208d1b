// The Content-Security-Policy builder: the storage origin uploads go to, and production against development.
import { describe, expect, it } from "vitest";
import { contentSecurityPolicy, newNonce, storageOrigin } from "~/utils/csp.server";

const directives = (policy: string) =>
  Object.fromEntries(
    policy
      .split("; ")
      .map((d) => d.split(" "))
      .map(([name, ...values]) => [name, values]),
  );

describe("content security policy", () => {
  it("names the origin presigned uploads go to: the endpoint (path style) or the bucket's virtual host", () => {
    expect(storageOrigin({ endpoint: "http://127.0.0.1:54330", bucket: "diffractory-data", forcePathStyle: true })).toBe("http://127.0.0.1:54330");
    expect(storageOrigin({ endpoint: "https://s3.eu-west-1.amazonaws.com/", bucket: "diffractory-data", forcePathStyle: false })).toBe(
      "https://diffractory-data.s3.eu-west-1.amazonaws.com",
    );
    expect(storageOrigin({ endpoint: "not a url", bucket: "b", forcePathStyle: true })).toBeNull();
  });

  it("allows scripts only from here or with the nonce in production, and loosens only scripts and styles in development", () => {
    const nonce = newNonce();
    expect(nonce).toMatch(/^[A-Za-z0-9+/]{24}$/);
    expect(newNonce()).not.toBe(nonce);
    const prod = directives(contentSecurityPolicy(nonce, { storage: "https://bucket.s3.example" }));
    expect(prod["script-src"]).toEqual(["'self'", `'nonce-${nonce}'`]);
    expect(prod["connect-src"]).toEqual(["'self'", "https://bucket.s3.example"]);
    expect(prod["frame-ancestors"]).toEqual(["'none'"]);
    expect(prod["object-src"]).toEqual(["'none'"]);
    expect(prod["style-src-elem"]).toEqual(["'self'"]);
    const dev = directives(contentSecurityPolicy(nonce, { development: true, storage: null }));
    expect(dev["script-src"]).toEqual(["'self'", "'unsafe-inline'"]);
    expect(dev["connect-src"]).toEqual(["'self'", "ws:", "wss:"]);
    expect(dev["frame-ancestors"]).toEqual(["'none'"]);
  });
});
