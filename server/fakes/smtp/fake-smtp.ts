import crypto from 'node:crypto';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import express from 'express';
import { simpleParser, type AddressObject } from 'mailparser';
import { SMTPServer } from 'smtp-server';

/** A message as the capture server keeps it. */
export interface CapturedMessage {
  id: string;
  receivedAt: string;
  /** SMTP envelope: who the message was really sent to (Bcc included). */
  envelope: { from: string | null; to: string[] };
  from: string;
  to: string[];
  subject: string;
  text: string;
  html: string | null;
  /** Lower-case header names, first value of each, as text. */
  headers: Record<string, string>;
  sizeBytes: number;
}

export interface FakeSmtpOptions {
  /** SMTP port (0 = any free one). */
  smtpPort?: number;
  /** Port of the small HTTP API that lists what was captured (0 = any free one). */
  apiPort?: number;
  host?: string;
  /** Most messages kept; older ones are dropped first. */
  keep?: number;
}

function addresses(value: AddressObject | AddressObject[] | undefined): string[] {
  if (!value) return [];
  return (Array.isArray(value) ? value : [value]).flatMap((a) => a.value.map((v) => v.address ?? '').filter(Boolean));
}

/**
 * A local SMTP server that accepts every message and keeps it in memory, plus an HTTP API on
 * loopback to read them (`GET /messages`, `GET /messages/:id`, `DELETE /messages`). It stands in
 * for a real mail server in development and tests; nothing leaves the machine. `stop()` and
 * `start()` can be used to take it down and bring it back (on the same ports).
 */
export function createFakeSmtp(opts: FakeSmtpOptions = {}) {
  const host = opts.host ?? '127.0.0.1';
  const keep = opts.keep ?? 500;
  const messages: CapturedMessage[] = [];
  let smtpPort = opts.smtpPort ?? 0;
  let smtp: SMTPServer | null = null;

  function newSmtpServer() {
    return new SMTPServer({
      authOptional: true,
      disabledCommands: ['STARTTLS'],
      banner: 'Benchproof local mail capture (nothing is delivered)',
      size: 10 * 1024 * 1024,
      logger: false,
      onData(stream, session, callback) {
        const chunks: Buffer[] = [];
        stream.on('data', (c: Buffer) => chunks.push(c));
        stream.on('error', callback);
        stream.on('end', () => {
          const raw = Buffer.concat(chunks);
          simpleParser(raw).then(
            (parsed) => {
              const headers: Record<string, string> = {};
              // The raw lines, not mailparser's structured values (it folds List-* headers into one object).
              for (const { key, line } of parsed.headerLines) {
                if (!(key in headers)) headers[key] = line.slice(line.indexOf(':') + 1).replace(/\r?\n[ \t]+/g, ' ').trim();
              }
              messages.push({
                id: crypto.randomUUID(),
                receivedAt: new Date().toISOString(),
                envelope: {
                  from: session.envelope.mailFrom ? session.envelope.mailFrom.address : null,
                  to: session.envelope.rcptTo.map((r) => r.address),
                },
                from: addresses(parsed.from)[0] ?? '',
                to: addresses(parsed.to),
                subject: parsed.subject ?? '',
                text: parsed.text ?? '',
                html: typeof parsed.html === 'string' ? parsed.html : null,
                headers,
                sizeBytes: raw.length,
              });
              while (messages.length > keep) messages.shift();
              callback();
            },
            (err: Error) => callback(err),
          );
        });
      },
    });
  }

  const api = express();
  api.disable('x-powered-by');
  api.get('/messages', (_req, res) => {
    res.json({ items: [...messages].reverse() });
  });
  api.get('/messages/:id', (req, res) => {
    const m = messages.find((x) => x.id === req.params.id);
    if (!m) res.status(404).json({ error: { code: 'not_found', message: 'No captured message has that id.', details: [] } });
    else res.json({ message: m });
  });
  api.delete('/messages', (_req, res) => {
    messages.length = 0;
    res.status(204).end();
  });
  const apiServer = http.createServer(api);

  async function start(): Promise<string> {
    if (smtp) return `smtp://${host}:${smtpPort}`;
    const server = newSmtpServer();
    await new Promise<void>((resolve, reject) => {
      server.once('error', reject);
      server.listen(smtpPort, host, () => resolve());
    });
    smtp = server;
    smtpPort = (server.server.address() as AddressInfo).port;
    return `smtp://${host}:${smtpPort}`;
  }

  async function stop(): Promise<void> {
    const server = smtp;
    smtp = null;
    if (server) await new Promise<void>((resolve) => server.close(() => resolve()));
  }

  return {
    messages,
    /** Starts SMTP and the API; resolves to their URLs. */
    async listen(): Promise<{ smtpUrl: string; apiUrl: string }> {
      const smtpUrl = await start();
      if (!apiServer.listening) {
        await new Promise<void>((resolve, reject) => {
          apiServer.once('error', reject);
          apiServer.listen(opts.apiPort ?? 0, host, () => resolve());
        });
      }
      return { smtpUrl, apiUrl: `http://${host}:${(apiServer.address() as AddressInfo).port}` };
    },
    /** Takes the SMTP side down (the API stays), as a failing mail server would be. */
    stopSmtp: stop,
    /** Brings the SMTP side back on the same port. */
    startSmtp: start,
    /** Waits until `count` messages match, or throws after `ms`. */
    async waitFor(predicate: (m: CapturedMessage) => boolean, count = 1, ms = 15_000): Promise<CapturedMessage[]> {
      const end = Date.now() + ms;
      for (;;) {
        const found = messages.filter(predicate);
        if (found.length >= count) return found;
        if (Date.now() > end) throw new Error(`expected ${count} captured message(s), found ${found.length} after ${ms} ms`);
        await new Promise((r) => setTimeout(r, 100));
      }
    },
    async close() {
      await stop();
      if (apiServer.listening) {
        apiServer.closeAllConnections();
        await new Promise<void>((resolve) => apiServer.close(() => resolve()));
      }
    },
  };
}

export type FakeSmtp = ReturnType<typeof createFakeSmtp>;
