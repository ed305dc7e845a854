/**
 * Creates a Plinth account from the command line (the first manager, typically).
 *
 *   npm run user:create -- --email ana@plant.example --role manager [--name "Ana Ruiz"]
 *
 * Asks for the password twice without echoing it. With --password-stdin it reads one
 * line from standard input instead (for scripted installs).
 */
import readline from "node:readline";
import { parseArgs } from "node:util";
import { roles, type Role } from "@/lib/access";
import { emailField, nameField, newPasswordField } from "@/lib/schemas/users";
import { hashPassword } from "@/lib/server/auth/passwords";
import { closeDatabase, migrateDatabase } from "@/lib/server/db/client";
import { writeAudit } from "@/lib/server/db/queries/audit";
import { findUserByEmail, insertUser } from "@/lib/server/db/queries/users";

const usage = `Usage: npm run user:create -- --email <e-mail> --role <${roles.join("|")}> [--name <name>] [--password-stdin]`;

function fail(message: string): never {
  console.error(`user:create: ${message}\n${usage}`);
  process.exit(2);
}

async function readHidden(prompt: string): Promise<string> {
  if (!process.stdin.isTTY) fail("no terminal to ask for a password; use --password-stdin");
  return new Promise((resolve) => {
    const rl = readline.createInterface({
      input: process.stdin,
      output: process.stdout,
      terminal: true,
    });
    const out = rl as unknown as {
      _writeToOutput: (s: string) => void;
      output: NodeJS.WriteStream;
    };
    out._writeToOutput = (s: string) => {
      if (s.includes(prompt)) out.output.write(prompt);
    };
    rl.question(prompt, (answer) => {
      rl.close();
      process.stdout.write("\n");
      resolve(answer);
    });
  });
}

async function readLine(): Promise<string> {
  const rl = readline.createInterface({ input: process.stdin });
  for await (const line of rl) {
    rl.close();
    return line;
  }
  return "";
}

const { values } = parseArgs({
  options: {
    email: { type: "string" },
    role: { type: "string" },
    name: { type: "string" },
    "password-stdin": { type: "boolean", default: false },
    help: { type: "boolean", default: false },
  },
});
if (values.help) {
  console.log(usage);
  process.exit(0);
}
const email = emailField.safeParse(values.email ?? "");
if (!email.success) fail("give a valid --email");
if (!roles.includes(values.role as Role)) fail(`--role must be one of ${roles.join(", ")}`);
const name = nameField.safeParse(values.name ?? email.data.split("@")[0]);
if (!name.success) fail("give a --name");

let password: string;
if (values["password-stdin"]) {
  password = (await readLine()).trim();
} else {
  password = await readHidden("Password (at least 10 characters): ");
  const again = await readHidden("Password again: ");
  if (again !== password) fail("the two passwords differ");
}
const checked = newPasswordField.safeParse(password);
if (!checked.success) fail(checked.error.issues[0]?.message ?? "password not accepted");

migrateDatabase();
if (findUserByEmail(email.data)) fail(`an account with ${email.data} already exists`);
const user = insertUser({
  email: email.data,
  name: name.data,
  role: values.role as Role,
  passwordHash: await hashPassword(password),
});
writeAudit(
  { label: "command line" },
  {
    action: "user.created",
    entityType: "user",
    entityId: user.id,
    detail: { email: user.email, role: user.role, via: "user:create" },
  },
);
closeDatabase();
console.log(`Created ${user.role} ${user.email} (id ${user.id}).`);
