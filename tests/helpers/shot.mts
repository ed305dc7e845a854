// Screenshots for looking at pages by hand: npx tsx tests/helpers/shot.mts <role> <paths> <widths> <schemes>
// against a running demo at $B (default http://localhost:4321); PNGs go to /tmp/shots.
import { openBrowser } from "./browser.ts";
const B = process.env.B ?? "http://localhost:4321";
const [who = "operator", paths = "/floor", sizes = "390,1440", schemes = "light,dark"] = process.argv.slice(2);
for (const w of sizes.split(",").map(Number)) {
  for (const scheme of schemes.split(",") as ("light" | "dark")[]) {
    const { context, close } = await openBrowser({ width: w, height: w < 500 ? 844 : 900, mobile: w < 500, colorScheme: scheme });
    const page = await context.newPage();
    await page.goto(B + "/login");
    await page.fill("#email", `${who}@example.com`);
    await page.fill("#password", "demo-plinth-pass");
    await page.click("button[type=submit]");
    await page.waitForURL(B + "/");
    for (const p of paths.split(",")) {
      await page.goto(B + p);
      await page.waitForTimeout(1500);
      await page.screenshot({ path: `/tmp/shots/${who}${p.replace(/\//g, "_")}-${w}-${scheme}.png`, fullPage: true });
    }
    await close();
  }
}
