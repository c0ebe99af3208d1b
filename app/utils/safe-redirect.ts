// The one parser for redirect targets that come from input (sign-in's redirectTo and the like): only a path on
// this site is followed, in the form a browser would read it.

/** A redirect target longer than this is refused; no page of the app has an address near it. */
export const REDIRECT_MAX_LENGTH = 2000;

// A base that is nobody's site, so a value that names any host at all changes the origin and is refused.
const BASE = "http://diffractory.invalid";
// Browsers drop tab, CR and LF anywhere in a URL, trim other C0 controls and spaces at its ends, and read "\" as
// "/": "/\t/evil" and "/\evil" are followed as "//evil", a link to another host. Such input is
// refused rather than guessed at; nothing the app builds contains it.
function browserRewrites(value: string) {
  for (let i = 0; i < value.length; i++) {
    const c = value.charCodeAt(i);
    if (c < 0x20 || c === 0x7f || c === 0x5c) return true;
  }
  return false;
}

/**
 * The same-origin path that `to` names — pathname, query and fragment, normalised and percent-encoded as a browser
 * would resolve them — or null when `to` is not a string, names another origin or scheme, or holds control
 * characters or backslashes. Encoded slashes (%2F, %5C) stay part of a path on this site.
 */
export function sameSitePath(to: unknown): string | null {
  if (typeof to !== "string" || to.length > REDIRECT_MAX_LENGTH || browserRewrites(to)) return null;
  if (!to.startsWith("/") || to.startsWith("//")) return null;
  let url: URL;
  try {
    url = new URL(to, BASE);
  } catch {
    return null;
  }
  if (url.origin !== BASE) return null;
  const path = url.pathname + url.search + url.hash;
  // Dot segments can leave "//host" behind ("/..//evil"), which a browser would follow off the site.
  return path.startsWith("//") ? null : path;
}
