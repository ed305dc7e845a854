import path from "node:path";
import { defineConfig } from "vitest/config";

const alias = { "@": path.resolve(import.meta.dirname, "src") };

export default defineConfig({
  resolve: { alias },
  test: {
    projects: [
      {
        resolve: { alias },
        test: {
          name: "unit",
          sequence: { groupOrder: 0 },
          include: ["src/**/*.test.ts", "simulator/**/*.test.ts", "scripts/**/*.test.ts"],
          environment: "node",
        },
      },
      {
        resolve: { alias },
        test: {
          name: "integration",
          sequence: { groupOrder: 1 },
          include: ["tests/**/*.test.ts"],
          environment: "node",
          globalSetup: ["tests/setup/build.ts"],
          testTimeout: 60_000,
          // A test against a real server and browser on a busy 2-core machine gets one more
          // try; one that fails twice is a failure.
          retry: 1,
          hookTimeout: 120_000,
          // Each file starts its own server; two at a time suit a 2-core machine.
          maxWorkers: 2,
        },
      },
    ],
  },
});
