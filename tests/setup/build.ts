// Integration tests run against the built server: build once, before any of them.
import { ensureBuild } from "../../scripts/ensure-build.mjs";

export default function setup() {
  ensureBuild({ quiet: true });
}
