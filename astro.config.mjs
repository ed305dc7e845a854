import node from "@astrojs/node";
import react from "@astrojs/react";
import tailwindcss from "@tailwindcss/vite";
import { defineConfig } from "astro/config";
import plinthServices from "./src/integrations/services.mjs";

export default defineConfig({
  output: "server",
  // PLINTH_DIST_DIR lets two builds (two engineers' test runs) live side by side.
  outDir: process.env.PLINTH_DIST_DIR ?? "./dist",
  adapter: node({ mode: "standalone" }),
  integrations: [react(), plinthServices()],
  security: {
    // The origin check lives in src/middleware.ts: the same rule as Astro's for form posts
    // (and for JSON carrying a session), with an exception for the SMS provider's webhook,
    // which posts a form with no Origin and proves itself by its signature instead.
    checkOrigin: false,
    // A plant server is reached by whatever name or address its network gives it, so the
    // request's own Host is trusted to build the URL; the origin check compares against it.
    allowedDomains: [{ protocol: "http" }, { protocol: "https" }],
  },
  server: { port: Number(process.env.PORT ?? 4321), host: process.env.HOST ?? "0.0.0.0" },
  devToolbar: { enabled: false },
  vite: {
    plugins: [tailwindcss()],
    ssr: { noExternal: ["echarts-for-react"] },
  },
});
