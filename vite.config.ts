// Vite builds the React Router app; the server build's entry is our Express app so it can set headers and context.
import { reactRouter } from "@react-router/dev/vite";
import tailwindcss from "@tailwindcss/vite";
import { defineConfig } from "vite";

export default defineConfig(({ isSsrBuild }) => ({
  build: {
    rollupOptions: isSsrBuild ? { input: "./server/app.ts" } : undefined,
  },
  resolve: { tsconfigPaths: true },
  plugins: [tailwindcss(), reactRouter()],
}));
