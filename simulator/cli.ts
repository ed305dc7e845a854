/**
 * The plant simulator on the command line: `tsx simulator/cli.ts --help`.
 * Reads run-time commands from stdin (a fault to switch, `status`, `stop`); Ctrl-C stops
 * cleanly after sending what is queued, a second Ctrl-C at once.
 */
import { startSimulator } from "./index";
import { HELP, parseCli, type CliCommand } from "./options";

let command: CliCommand;
try {
  command = parseCli(process.argv.slice(2), process.env);
} catch (err) {
  console.error(`simulator: ${err instanceof Error ? err.message : String(err)}\nSee --help.`);
  process.exit(2);
}

if (command.kind === "help") {
  process.stdout.write(HELP);
  process.exit(0);
}

const { options } = command;
let sim: ReturnType<typeof startSimulator>;
try {
  sim = startSimulator({ ...options, control: process.stdin });
} catch (err) {
  console.error(`simulator: ${err instanceof Error ? err.message : String(err)}`);
  process.exit(2);
}

const target =
  options.transport === "http"
    ? (options.httpUrl ?? "http://localhost:4321")
    : (options.mqttUrl ?? "mqtt://127.0.0.1:1883");
console.log(
  `simulator: ${sim.report().transport} to ${target}, ${Array.isArray(options.sensors) ? options.sensors.length : "all"} sensors${options.once ? ", one round" : ""}. Type help for run-time commands; Ctrl-C to stop.`,
);

let interrupted = false;
function onSignal(signal: NodeJS.Signals) {
  if (interrupted) {
    console.log("simulator: stopping at once");
    process.exit(130);
  }
  interrupted = true;
  console.log(
    `simulator: ${signal}: sending what is queued, then stopping (Ctrl-C again to quit at once)`,
  );
  void sim.stop();
}
process.on("SIGINT", onSignal);
process.on("SIGTERM", onSignal);

const result = await sim.done;
process.exit(result.fatal ? 2 : result.undelivered > 0 ? 1 : 0);
