// The local mail fake: an SMTP server on 127.0.0.1 that delivers nothing and keeps every
// message in the app's database (table mail_fake_messages), where /dev/mail and the tests
// read it. Started by `npm start` (when SMTP_URL is unset) and by `npm test`.
//   node --import tsx scripts/mail-fake.ts [--port 2525]     (DATABASE_URL: the app's database)
import { SMTPServer } from "smtp-server";

import { storeFakeMail } from "../lib/data/notifications";
import { closeDb } from "../lib/data/pool";
import { parseRawMail } from "../lib/mail";

const MAX_MESSAGE_BYTES = 10 * 1024 * 1024;
const portArg = process.argv.indexOf("--port");
const port = Number(portArg > 0 ? process.argv[portArg + 1] : 2525);
if (!Number.isInteger(port) || port < 0 || port > 65535) {
  console.error(`mail fake: --port must be a port number, got ${process.argv[portArg + 1]}`);
  process.exit(2);
}

const server = new SMTPServer({
  authOptional: true, disabledCommands: ["STARTTLS", "AUTH"], size: MAX_MESSAGE_BYTES, banner: "Burstwise mail fake (delivers nothing)",
  onData(stream, session, callback) {
    const chunks: Buffer[] = [];
    stream.on("data", (c: Buffer) => chunks.push(c));
    stream.on("end", async () => {
      if ((stream as unknown as { sizeExceeded?: boolean }).sizeExceeded) {
        return callback(Object.assign(new Error("message too large for the mail fake"), { responseCode: 552 }));
      }
      const raw = Buffer.concat(chunks).toString("utf8");
      const parsed = parseRawMail(raw);
      try {
        await storeFakeMail({
          mailFrom: session.envelope.mailFrom ? session.envelope.mailFrom.address : null,
          rcptTo: session.envelope.rcptTo.map((r) => r.address), subject: parsed.subject, textBody: parsed.text, raw,
        });
        console.log(`mail fake: kept "${parsed.subject}" for ${session.envelope.rcptTo.map((r) => r.address).join(", ")}`);
        callback();
      } catch (e) {
        console.error("mail fake: could not store a message:", e);
        callback(Object.assign(new Error("mail fake could not store the message"), { responseCode: 451 }));
      }
    });
  },
});
let listening = false;
server.on("error", (e) => {
  console.error("mail fake:", e.message);
  if (!listening) process.exit(1); // e.g. the port is taken: say so and stop, do not linger
});

server.listen(port, "127.0.0.1", () => {
  listening = true;
  const address = server.server.address();
  console.log(`mail fake listening on 127.0.0.1:${typeof address === "object" && address ? address.port : port}`);
});

let stopping = false;
function stop(signal: string) {
  if (stopping) return;
  stopping = true;
  console.log(`mail fake: ${signal}, stopping`);
  server.close(() => void closeDb().finally(() => process.exit(0)));
  setTimeout(() => process.exit(0), 3000).unref();
}
process.on("SIGTERM", () => stop("SIGTERM"));
process.on("SIGINT", () => stop("SIGINT"));
