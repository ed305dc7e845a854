import { openBrowser } from "./browser.ts";
const B = "http://localhost:4400";
for (const [w, h, mobile] of [[390, 844, true], [1440, 900, false]] as const) {
  for (const scheme of ["light", "dark"] as const) {
    for (const who of (process.argv[2] ?? "operator,manager").split(",")) {
      const { context, close } = await openBrowser({ width: w, height: h, mobile, colorScheme: scheme });
      const page = await context.newPage();
      await page.goto(B + "/login");
      if (who === "login") { await page.screenshot({ path: `/tmp/shots/login-${w}-${scheme}.png`, fullPage: true }); await close(); continue; }
      await page.fill("#email", `${who}@example.com`);
      await page.fill("#password", "demo-plinth-pass");
      await page.click("button[type=submit]");
      await page.waitForURL(B + "/");
      for (const p of (process.argv[3] ?? "/").split(",")) {
        await page.goto(B + p);
        await page.screenshot({ path: `/tmp/shots/${who}${p.replace(/\//g, "_")}-${w}-${scheme}.png`, fullPage: true });
      }
      await close();
    }
  }
}
