// The local SMTP sink: accepts every message on loopback and keeps it in a folder,
// as the raw .eml and a small .json (to, subject, text) that tests and people can read.
import { promises as fs } from "node:fs";
import path from "node:path";
import { simpleParser } from "mailparser";
import { SMTPServer } from "smtp-server";

const port = Number(process.env.SMTP_PORT);
const dir = process.env.MAIL_DIR ?? "";

const server = new SMTPServer({
  authOptional: true,
  disabledCommands: ["STARTTLS", "AUTH"],
  logger: false,
  onData(stream, _session, callback) {
    const chunks: Buffer[] = [];
    stream.on("data", (c: Buffer) => chunks.push(c));
    stream.on("end", () => void keep());
    async function keep(): Promise<void> {
      try {
        const raw = Buffer.concat(chunks);
        const parsed = await simpleParser(raw);
        const stamp = new Date().toISOString().replace(/[:.]/g, "-");
        const base = path.join(dir, `${stamp}-${Math.random().toString(36).slice(2, 8)}`);
        const to = Array.isArray(parsed.to)
          ? parsed.to.map((a) => a.text).join(", ")
          : (parsed.to?.text ?? "");
        await fs.writeFile(`${base}.eml`, raw);
        await fs.writeFile(
          `${base}.json`,
          JSON.stringify(
            { to, subject: parsed.subject ?? "", text: parsed.text ?? "", receivedAt: new Date() },
            null,
            2,
          ),
        );
        callback();
      } catch (err) {
        callback(err as Error);
      }
    }
  },
});

server.on("error", (err) => console.error("mail sink error:", err));
void fs
  .mkdir(dir, { recursive: true })
  .then(() =>
    server.listen(port, "127.0.0.1", () =>
      console.log(`mail sink listening on 127.0.0.1:${port}, keeping mail in ${dir}`),
    ),
  );

for (const signal of ["SIGTERM", "SIGINT"] as const) {
  process.on(signal, () => server.close(() => process.exit(0)));
}
