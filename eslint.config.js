import js from "@eslint/js";
import { defineConfig } from "eslint/config";
import globals from "globals";
import tseslint from "typescript-eslint";

export default defineConfig(
  { ignores: ["dist/", "dist-*/", ".astro/", "node_modules/", "drizzle/", "test-results/", "data/"] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
    rules: {
      "@typescript-eslint/no-unused-vars": [
        "error",
        { argsIgnorePattern: "^_", varsIgnorePattern: "^_", destructuredArrayIgnorePattern: "^_" },
      ],
      "@typescript-eslint/consistent-type-imports": [
        "error",
        { fixStyle: "inline-type-imports", disallowTypeAnnotations: false },
      ],
      "no-console": "off",
    },
  },
  {
    // The trade's math stays pure: no framework, database, broker or Node I/O in src/domain.
    files: ["src/domain/**/*.ts"],
    rules: {
      "no-restricted-imports": [
        "error",
        {
          patterns: [
            { group: ["astro", "astro:*", "astro/*"], message: "src/domain is pure: no Astro." },
            {
              group: ["drizzle-orm", "drizzle-orm/*", "better-sqlite3"],
              message: "src/domain is pure: no database.",
            },
            {
              group: ["mqtt", "aedes", "nodemailer", "twilio"],
              message: "src/domain is pure: no I/O.",
            },
            {
              group: ["node:*", "fs", "path", "http", "net", "child_process"],
              message: "src/domain is pure: no Node I/O.",
            },
            {
              group: ["@/lib/server/*", "**/lib/server/*"],
              message: "src/domain must not reach the server edge.",
            },
          ],
        },
      ],
    },
  },
);
