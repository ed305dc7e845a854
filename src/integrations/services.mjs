// Runs Plinth's background services (database, broker, workers) in the same process and
// module graph as the pages, in both `astro dev` and the built server.
import path from "node:path";
import { fileURLToPath } from "node:url";

const servicesEntry = fileURLToPath(new URL("../lib/server/services.ts", import.meta.url));
// The demo's live feed: the simulator, built beside the services so `npm run demo` runs it
// in the same process (it talks to the broker over loopback like any gateway).
const simulatorEntry = fileURLToPath(new URL("../../simulator/index.ts", import.meta.url));

/** @returns {import("astro").AstroIntegration} */
export default function plinthServices() {
  /** @type {import("vite").ViteDevServer | undefined} */
  let devServer;
  return {
    name: "plinth-services",
    hooks: {
      "astro:build:setup": ({ vite, target }) => {
        if (target !== "server") return;
        vite.plugins ??= [];
        vite.plugins.push({
          name: "plinth-services-chunk",
          buildStart() {
            // dist/server/services.mjs shares the page chunks: one bus, one database handle.
            this.emitFile({ type: "chunk", id: servicesEntry, fileName: "services.mjs" });
            this.emitFile({ type: "chunk", id: simulatorEntry, fileName: "simulator.mjs" });
          },
        });
      },
      "astro:server:setup": ({ server }) => {
        if (server.httpServer) devServer = server;
      },
      "astro:server:start": async ({ logger }) => {
        if (!devServer) return;
        const mod = await devServer.ssrLoadModule("/" + path.relative(process.cwd(), servicesEntry));
        await mod.startServices({ demo: process.env.PLINTH_DEMO === "1" });
        const close = devServer.close.bind(devServer);
        devServer.close = async () => {
          await mod.stopServices();
          return close();
        };
        logger.info("services started");
      },
    },
  };
}
