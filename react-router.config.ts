// React Router framework-mode settings: server rendering with the app's own Express server (server/app.ts).
import type { Config } from "@react-router/dev/config";

export default {
  ssr: true,
  // The browser loads the whole route manifest once, as a fingerprinted asset it caches (about 4 KB gzipped),
  // instead of each page carrying the part of it for its own URL: working that part out matched the URL's
  // parents against every route on every page render, and lazy discovery asked /__manifest on navigation.
  routeDiscovery: { mode: "initial" },
} satisfies Config;
