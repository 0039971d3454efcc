import "server-only";

/** Plain text plus simple HTML for each message we send. Every value put into HTML is escaped. */
export interface MailContent {
  subject: string;
  text: string;
  html: string;
}

function escapeHtml(value: string): string {
  return value
    .replaceAll("&", "&amp;")
    .replaceAll("<", "&lt;")
    .replaceAll(">", "&gt;")
    .replaceAll('"', "&quot;")
    .replaceAll("'", "&#39;");
}

export function layout(title: string, paragraphs: string[], action: { label: string; url: string }, footer: string): string {
  const body = paragraphs.map((p) => `<p style="margin:0 0 12px">${escapeHtml(p)}</p>`).join("");
  return `<!doctype html><html><body style="font-family:system-ui,sans-serif;color:#1b2330;max-width:560px;margin:24px auto">
<h1 style="font-size:20px">${escapeHtml(title)}</h1>${body}
<p style="margin:20px 0"><a href="${escapeHtml(action.url)}" style="background:#0f6b5c;color:#fff;padding:10px 16px;border-radius:6px;text-decoration:none">${escapeHtml(action.label)}</a></p>
<p style="font-size:12px;color:#5b6472">${escapeHtml(footer)}</p>
</body></html>`;
}

export function magicLinkMail(input: { url: string; host: string }): MailContent {
  const footer = "If you did not ask to sign in, you can ignore this message.";
  return {
    subject: "Your Kickdrift sign-in link",
    text: `Sign in to Kickdrift (${input.host}) with this link:\n\n${input.url}\n\nThe link works once and expires in 1 hour.\n${footer}\n`,
    html: layout(
      "Sign in to Kickdrift",
      [`Use the button below to sign in to ${input.host}. The link works once and expires in 1 hour.`],
      { label: "Sign in", url: input.url },
      footer,
    ),
  };
}

export function inviteMail(input: { url: string; studioName: string; role: string; inviterName: string; expiresAt: Date }): MailContent {
  const footer = "If you were not expecting this invitation, you can ignore this message.";
  const expires = input.expiresAt.toISOString().slice(0, 10);
  const intro = `${input.inviterName} invited you to join ${input.studioName} on Kickdrift as ${input.role}.`;
  return {
    subject: `You are invited to ${input.studioName} on Kickdrift`,
    text: `${intro}\n\nAccept the invitation:\n\n${input.url}\n\nThe link expires on ${expires} (UTC).\n${footer}\n`,
    html: layout(
      `Join ${input.studioName}`,
      [intro, `The link expires on ${expires} (UTC).`],
      { label: "Accept the invitation", url: input.url },
      footer,
    ),
  };
}

export function passwordResetMail(input: { url: string }): MailContent {
  const footer = "If you did not ask for a new password, you can ignore this message; your password stays as it is.";
  return {
    subject: "Reset your Kickdrift password",
    text: `Choose a new Kickdrift password with this link:\n\n${input.url}\n\nThe link works once and expires in 1 hour.\n${footer}\n`,
    html: layout(
      "Reset your password",
      ["Use the button below to choose a new password. The link works once and expires in 1 hour."],
      { label: "Choose a new password", url: input.url },
      footer,
    ),
  };
}

/** Sent instead of an error when someone signs up with an address that already has an account. */
export function accountExistsMail(input: { signInUrl: string; resetUrl: string }): MailContent {
  const footer = "If you did not try to create an account, you can ignore this message; nothing was changed.";
  return {
    subject: "You already have a Kickdrift account",
    text: `Someone (maybe you) tried to create a Kickdrift account with this address, which already has one.\n\nSign in:\n\n${input.signInUrl}\n\nForgot your password? Choose a new one:\n\n${input.resetUrl}\n\n${footer}\n`,
    html: layout(
      "You already have an account",
      [
        "Someone (maybe you) tried to create a Kickdrift account with this address, which already has one. No second account was made.",
        `Forgot your password? Choose a new one at ${input.resetUrl}`,
      ],
      { label: "Sign in", url: input.signInUrl },
      footer,
    ),
  };
}
