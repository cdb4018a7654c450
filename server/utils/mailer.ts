import nodemailer, { type Transporter } from 'nodemailer'

export interface SmtpSettings {
  host: string
  port: number | string
  secure: boolean | string
  user?: string
  pass?: string
  from: string
}

export interface MailMessage {
  to: string
  subject: string
  text: string
  html?: string
  headers?: Record<string, string>
}

/** A mailer bound to one SMTP server (maildev locally, a real relay in production). */
export function createMailer(smtp: SmtpSettings) {
  const secure = smtp.secure === true || smtp.secure === 'true'
  const transport: Transporter = nodemailer.createTransport({
    host: smtp.host,
    port: Number(smtp.port),
    secure,
    ignoreTLS: !secure && ['127.0.0.1', 'localhost'].includes(smtp.host),
    auth: smtp.user ? { user: smtp.user, pass: smtp.pass } : undefined,
  })
  return {
    send: (message: MailMessage) => transport.sendMail({ from: smtp.from, ...message }),
    close: () => transport.close(),
  }
}

let mailer: ReturnType<typeof createMailer> | undefined

/** Sends one message through the configured SMTP server; rejects when it can't be delivered. */
export async function sendMail(message: MailMessage) {
  mailer ??= createMailer(useRuntimeConfig().smtp)
  return await mailer.send(message)
}

/** An absolute link into the app, for e-mails. */
export function appLink(path: string): string {
  return new URL(path, useRuntimeConfig().appUrl).toString()
}
