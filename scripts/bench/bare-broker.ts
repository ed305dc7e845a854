/**
 * The bare broker for benchmark 2, run in its own process (as Plinth's broker is):
 * a plain aedes broker configured like Plinth's (sign-in hook, publish hook, no
 * subscriptions offered) but with no database: every sign-in is accepted and every
 * publish on plinth/readings is acknowledged at once. No subscriber is connected, so
 * messages go nowhere, as in Plinth, where the publish hook is the message's only reader.
 *
 * Prints {"port": n} on its first line of output; SIGTERM closes it.
 */
import net from "node:net";
import { Aedes } from "aedes";

const broker = await Aedes.createBroker({
  id: "bare",
  authenticate: (_client, _username, _password, done) => done(null, true),
  authorizePublish: (client, packet, done) => {
    if (!client || !packet.topic.startsWith("plinth/readings"))
      return done(new Error("plinth/readings only"));
    done(null);
  },
  authorizeSubscribe: (_client, sub, done) =>
    done(new Error(`subscriptions are not offered (${sub.topic})`), null),
});
const server = net.createServer(broker.handle);
server.listen(0, "127.0.0.1", () => {
  const { port } = server.address() as net.AddressInfo;
  process.stdout.write(`${JSON.stringify({ port })}\n`);
});
process.once("SIGTERM", () => {
  broker.close(() => server.close(() => process.exit(0)));
  setTimeout(() => process.exit(0), 2_000).unref();
});
