import type { OutgoingMail } from "./outbox";

export function invitationMail(opts: {
  to: string;
  labName: string;
  roleLabel: string;
  inviterName: string;
  link: string;
  expiresAt: Date;
}): OutgoingMail {
  return {
    to: opts.to,
    subject: `You are invited to ${opts.labName} on Rillbook`,
    text: [
      `${opts.inviterName} has invited you to join ${opts.labName} on Rillbook as ${opts.roleLabel.toLowerCase()}.`,
      "",
      "Open this link to choose your name and password:",
      opts.link,
      "",
      `The link works once and expires on ${opts.expiresAt.toUTCString()}.`,
      "If you did not expect this, ignore this message.",
    ].join("\n"),
  };
}

export function passwordResetMail(opts: {
  to: string;
  labName: string;
  link: string;
  expiresAt: Date;
}): OutgoingMail {
  return {
    to: opts.to,
    subject: `Choose a new Rillbook password for ${opts.labName}`,
    text: [
      "Someone (we hope you) asked to reset the password of this Rillbook account.",
      "",
      "Open this link to choose a new password:",
      opts.link,
      "",
      `The link works once and expires on ${opts.expiresAt.toUTCString()}.`,
      "If you did not ask for this, ignore this message: your password stays as it is.",
    ].join("\n"),
  };
}
