import nodemailer from 'nodemailer';
import type { Db } from '../../db/client';
import type { Env } from '../env';
import { insertMail } from '../../db/queries/mail';
import { escapeHtml } from '../lib/html';

export type OutgoingMail = { to: string; subject: string; text: string; html: string; kind: string };
export type Mailer = { send(mail: OutgoingMail): Promise<void> };

/**
 * Sends mail through nodemailer. In "outbox" mode (development, tests) the message is built by
 * nodemailer's JSON transport and kept in the dev_mail table, the local mail fake that the
 * development inbox screen and tests read; nothing leaves the machine.
 */
export function createMailer(db: Db, env: Env): Mailer {
  const transport =
    env.MAIL_MODE === 'smtp' ? nodemailer.createTransport(env.SMTP_URL) : nodemailer.createTransport({ jsonTransport: true });
  return {
    async send(mail) {
      await transport.sendMail({ from: env.MAIL_FROM, to: mail.to, subject: mail.subject, text: mail.text, html: mail.html });
      if (env.MAIL_MODE === 'outbox') await insertMail(db, mail);
    },
  };
}

/** A plain message with one call-to-action link; every piece of user text is escaped. */
export function linkMail(opts: { to: string; kind: string; subject: string; lines: string[]; linkLabel: string; url: string }): OutgoingMail {
  const text = [...opts.lines, '', `${opts.linkLabel}: ${opts.url}`, '', '— Bandwright'].join('\n');
  const html = [
    ...opts.lines.map((l) => `<p>${escapeHtml(l)}</p>`),
    `<p><a href="${escapeHtml(opts.url)}">${escapeHtml(opts.linkLabel)}</a></p>`,
    '<p>— Bandwright</p>',
  ].join('\n');
  return { to: opts.to, kind: opts.kind, subject: opts.subject, text, html };
}

