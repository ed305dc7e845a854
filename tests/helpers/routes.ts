import fs from "node:fs";
import path from "node:path";

const pagesDir = path.resolve(import.meta.dirname, "..", "..", "src", "pages");

export interface RouteFile {
  route: string;
  kind: "page" | "api";
  file: string;
  /** Methods the file exports (endpoints), or ["GET"] for .astro pages. */
  methods: string[];
}

/** Every route Astro serves from src/pages, as Astro names it, with the methods it answers. */
export function listRouteFiles(): RouteFile[] {
  const out: RouteFile[] = [];
  const walk = (dir: string) => {
    for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
      if (e.name.startsWith("_")) continue;
      const p = path.join(dir, e.name);
      if (e.isDirectory()) {
        walk(p);
        continue;
      }
      const ext = path.extname(e.name);
      if (ext !== ".astro" && ext !== ".ts") continue;
      let route = "/" + path.relative(pagesDir, p).slice(0, -ext.length).split(path.sep).join("/");
      route = route.replace(/\/index$/, "") || "/";
      const text = fs.readFileSync(p, "utf8");
      const methods =
        ext === ".astro"
          ? ["GET"]
          : [...text.matchAll(/export const (GET|POST|PUT|PATCH|DELETE)\b/g)].map((m) => m[1]!);
      out.push({ route, kind: ext === ".astro" ? "page" : "api", file: p, methods });
    }
  };
  walk(pagesDir);
  return out.sort((a, b) => a.route.localeCompare(b.route));
}
