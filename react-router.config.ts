// React Router framework-mode settings: server rendering with the app's own Express server (server/app.ts).
import type { Config } from "@react-router/dev/config";

export default {
  ssr: true,
} satisfies Config;
