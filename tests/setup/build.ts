// Integration tests run against the built server: build once, before any of them
// (PLINTH_SKIP_BUILD=1 uses the build as it is).
import { ensureBuild } from "../../scripts/ensure-build.mjs";

export default function setup() {
  if (process.env.PLINTH_SKIP_BUILD !== "1") ensureBuild({ quiet: true });
}
