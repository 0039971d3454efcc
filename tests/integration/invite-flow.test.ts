/**
 * The invite flow at the API level, with mail going over real SMTP to the local fake (on a random
 * port): invite → captured mail → link → magic-link sign-in of a new person → accept → member.
 */
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Db } from "@/db/client";
import { invites, memberships, users } from "@/db/schema";
import { startMailFake, type MailFake } from "@/lib/fakes/smtp-fake";
import * as studiosRoute from "@/app/api/v1/studios/route";
import * as invitesRoute from "@/app/api/v1/studios/[studioId]/invites/route";
import * as inviteRoute from "@/app/api/v1/studios/[studioId]/invites/[inviteId]/route";
import * as membersRoute from "@/app/api/v1/studios/[studioId]/members/route";
import * as publicInviteRoute from "@/app/api/v1/invites/[token]/route";
import * as acceptRoute from "@/app/api/v1/invites/[token]/accept/route";
import * as mailRoute from "@/app/api/v1/dev/mail/route";
import { closeTestDb, useFreshDb, TEST_BASE_URL } from "../helpers/db";
import { makeUser, uniqueEmail } from "../helpers/factories";
import { call, errorOf, mergeCookies, sessionCookie } from "../helpers/http";
import { csrf, nextAuth } from "../helpers/next-auth";
import { settleAfterResponse } from "@/lib/api/after-response";

interface Message {
  id: string;
  to: string;
  subject: string;
  text: string;
  html: string;
  links: string[];
}

let db: Db;
let fake: MailFake;
/** The mailbox is a platform admin's page: the flows below read it as one. */
let adminCookie: string;
beforeAll(async () => {
  db = await useFreshDb();
  fake = await startMailFake({ port: 0 });
  adminCookie = await sessionCookie(await makeUser({ name: "Mailbox Operator", isAdmin: true }));
});
afterAll(async () => {
  await fake.close();
  await closeTestDb();
});

async function mailbox(): Promise<Message[]> {
  const res = await call(mailRoute.GET, { path: "/api/v1/dev/mail", cookie: adminCookie });
  expect(res.status).toBe(200);
  return (res.body as { messages: Message[] }).messages;
}

async function latestMailTo(email: string): Promise<Message> {
  const message = (await mailbox()).find((m) => m.to.includes(email));
  if (!message) throw new Error(`no mail to ${email}`);
  return message;
}

/** Signs in by e-mailed link the way the browser does: ask for the link, open it from the mailbox. */
async function magicLinkSignIn(email: string, callbackUrl: string): Promise<string> {
  const { csrfToken, cookie } = await csrf();
  const ask = await nextAuth(["signin", "email"], { method: "POST", form: { csrfToken, email, callbackUrl, json: "true" }, cookie });
  expect(ask.status).toBe(200);
  // The link is mailed after the answer (issue 18).
  await settleAfterResponse();
  const mail = await latestMailTo(email);
  expect(mail.subject).toBe("Your Kickdrift sign-in link");
  const link = new URL(mail.links.find((l) => l.includes("/api/auth/callback/email"))!);
  const open = await nextAuth(["callback", "email"], { search: link.search, cookie });
  expect(open.status).toBe(302);
  expect(open.headers.get("location")).toBe(callbackUrl);
  return mergeCookies(cookie, open);
}

describe("invite → mail → accept", () => {
  it("makes the invited person a member with the invited role", async () => {
    const owner = await makeUser({ name: "Maren Okafor" });
    const ownerCookie = await sessionCookie(owner);
    const created = await call(studiosRoute.POST, { method: "POST", path: "/api/v1/studios", cookie: ownerCookie, body: { name: "Harbour Puck Lab" } });
    expect(created.status).toBe(201);
    const studioId = (created.body as { studio: { id: string; role: string } }).studio.id;

    const inviteeEmail = uniqueEmail("invitee");
    const invited = await call(invitesRoute.POST, {
      method: "POST",
      path: `/api/v1/studios/${studioId}/invites`,
      params: { studioId },
      cookie: ownerCookie,
      body: { email: inviteeEmail.toUpperCase(), role: "engineer" },
    });
    expect(invited.status).toBe(201);
    const invite = (invited.body as { invite: { id: string; email: string; role: string; expiresAt: string }; mailSent: boolean });
    expect(invite.mailSent).toBe(true);
    expect(invite.invite).toMatchObject({ email: inviteeEmail, role: "engineer" });
    const sevenDays = Date.parse(invite.invite.expiresAt) - Date.now();
    expect(sevenDays).toBeGreaterThan(7 * 24 * 3600_000 - 60_000);
    expect(sevenDays).toBeLessThanOrEqual(7 * 24 * 3600_000);

    const mail = await latestMailTo(inviteeEmail);
    expect(mail.subject).toContain("Harbour Puck Lab");
    expect(mail.text).toContain("Maren Okafor");
    const inviteLink = mail.links.find((l) => l.startsWith(`${TEST_BASE_URL}/invite/`))!;
    expect(inviteLink).toBeDefined();
    const token = decodeURIComponent(inviteLink.slice(`${TEST_BASE_URL}/invite/`.length));
    // Only the hash is stored: the token in the link appears nowhere in the database.
    const [stored] = await db.select().from(invites).where(eq(invites.id, invite.invite.id));
    expect(stored.tokenHash).not.toContain(token);
    expect(stored.tokenHash).toMatch(/^[0-9a-f]{64}$/);

    const described = await call(publicInviteRoute.GET, { path: `/api/v1/invites/${token}`, params: { token } });
    expect(described.status).toBe(200);
    expect((described.body as { invite: unknown }).invite).toMatchObject({
      studio: { id: studioId, name: "Harbour Puck Lab" },
      email: inviteeEmail,
      role: "engineer",
      expired: false,
      accepted: false,
    });

    // The invitee has no account yet: the magic link creates one.
    expect(await db.select().from(users).where(eq(users.email, inviteeEmail))).toHaveLength(0);
    const inviteeCookie = await magicLinkSignIn(inviteeEmail, `${TEST_BASE_URL}/invite/${token}`);
    const [invitee] = await db.select().from(users).where(eq(users.email, inviteeEmail));
    expect(invitee.emailVerified).not.toBeNull();

    const accepted = await call(acceptRoute.POST, { method: "POST", path: `/api/v1/invites/${token}/accept`, params: { token }, cookie: inviteeCookie });
    expect(accepted.status).toBe(200);
    expect(accepted.body).toEqual({ studio: { id: studioId, name: "Harbour Puck Lab", role: "engineer" } });

    const members = await call(membersRoute.GET, { path: `/api/v1/studios/${studioId}/members`, params: { studioId }, cookie: inviteeCookie });
    expect(members.status).toBe(200);
    const list = (members.body as { members: { userId: string; email: string; role: string }[] }).members;
    expect(list.find((m) => m.email === inviteeEmail)).toMatchObject({ userId: invitee.id, role: "engineer" });

    // Single use.
    const again = await call(acceptRoute.POST, { method: "POST", path: `/api/v1/invites/${token}/accept`, params: { token }, cookie: inviteeCookie });
    expect(again.status).toBe(410);
    expect(errorOf(again.body).code).toBe("invite_used");
    // The pending list no longer shows it.
    const pending = await call(invitesRoute.GET, { path: `/api/v1/studios/${studioId}/invites`, params: { studioId }, cookie: ownerCookie });
    expect((pending.body as { invites: unknown[] }).invites).toHaveLength(0);
  });

  it("answers 410 for an expired invite and shows it as expired", async () => {
    const owner = await makeUser();
    const ownerCookie = await sessionCookie(owner);
    const studioId = ((await call(studiosRoute.POST, { method: "POST", path: "/api/v1/studios", cookie: ownerCookie, body: { name: "Salt Marsh Games" } })).body as { studio: { id: string } }).studio.id;
    const invitee = await makeUser();
    const res = await call(invitesRoute.POST, { method: "POST", path: `/api/v1/studios/${studioId}/invites`, params: { studioId }, cookie: ownerCookie, body: { email: invitee.email, role: "finance" } });
    const inviteId = (res.body as { invite: { id: string } }).invite.id;
    const link = (await latestMailTo(invitee.email)).links.find((l) => l.includes("/invite/"))!;
    const token = decodeURIComponent(link.split("/invite/")[1]);
    await db.update(invites).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(invites.id, inviteId));

    const described = await call(publicInviteRoute.GET, { path: `/api/v1/invites/${token}`, params: { token } });
    expect((described.body as { invite: { expired: boolean } }).invite.expired).toBe(true);
    const accepted = await call(acceptRoute.POST, { method: "POST", path: `/api/v1/invites/${token}/accept`, params: { token }, cookie: await sessionCookie(invitee) });
    expect(accepted.status).toBe(410);
    expect(errorOf(accepted.body).code).toBe("invite_expired");
    expect(await db.select().from(memberships).where(eq(memberships.userId, invitee.id))).toHaveLength(0);
  });

  it("refuses someone signed in with a different e-mail, and the invite stays usable", async () => {
    const owner = await makeUser();
    const ownerCookie = await sessionCookie(owner);
    const studioId = ((await call(studiosRoute.POST, { method: "POST", path: "/api/v1/studios", cookie: ownerCookie, body: { name: "Kiln Rocket Co" } })).body as { studio: { id: string } }).studio.id;
    const invitee = await makeUser();
    const stranger = await makeUser();
    await call(invitesRoute.POST, { method: "POST", path: `/api/v1/studios/${studioId}/invites`, params: { studioId }, cookie: ownerCookie, body: { email: invitee.email, role: "owner" } });
    const token = decodeURIComponent((await latestMailTo(invitee.email)).links.find((l) => l.includes("/invite/"))!.split("/invite/")[1]);
    const wrong = await call(acceptRoute.POST, { method: "POST", path: `/api/v1/invites/${token}/accept`, params: { token }, cookie: await sessionCookie(stranger) });
    expect(wrong.status).toBe(403);
    expect(errorOf(wrong.body).code).toBe("invite_email_mismatch");
    const right = await call(acceptRoute.POST, { method: "POST", path: `/api/v1/invites/${token}/accept`, params: { token }, cookie: await sessionCookie(invitee) });
    expect(right.status).toBe(200);
    expect((right.body as { studio: { role: string } }).studio.role).toBe("owner");
  });

  it("a newer invite to the same address replaces the older link; a deleted invite is gone", async () => {
    const owner = await makeUser();
    const ownerCookie = await sessionCookie(owner);
    const studioId = ((await call(studiosRoute.POST, { method: "POST", path: "/api/v1/studios", cookie: ownerCookie, body: { name: "Gull Tide Interactive" } })).body as { studio: { id: string } }).studio.id;
    const email = uniqueEmail("twice");
    const post = () => call(invitesRoute.POST, { method: "POST", path: `/api/v1/studios/${studioId}/invites`, params: { studioId }, cookie: ownerCookie, body: { email, role: "engineer" } });
    await post();
    const firstToken = decodeURIComponent((await latestMailTo(email)).links.find((l) => l.includes("/invite/"))!.split("/invite/")[1]);
    const second = await post();
    const secondId = (second.body as { invite: { id: string } }).invite.id;
    expect((await call(publicInviteRoute.GET, { path: "/x", params: { token: firstToken } })).status).toBe(404);
    const del = await call(inviteRoute.DELETE, { method: "DELETE", path: "/x", params: { studioId, inviteId: secondId }, cookie: ownerCookie });
    expect(del.status).toBe(200);
    const delAgain = await call(inviteRoute.DELETE, { method: "DELETE", path: "/x", params: { studioId, inviteId: secondId }, cookie: ownerCookie });
    expect(delAgain.status).toBe(404);
  });

  it("refuses to invite someone who is already a member (409, field email)", async () => {
    const owner = await makeUser();
    const ownerCookie = await sessionCookie(owner);
    const studioId = ((await call(studiosRoute.POST, { method: "POST", path: "/api/v1/studios", cookie: ownerCookie, body: { name: "Ember Sled Games" } })).body as { studio: { id: string } }).studio.id;
    const res = await call(invitesRoute.POST, { method: "POST", path: "/x", params: { studioId }, cookie: ownerCookie, body: { email: owner.email, role: "engineer" } });
    expect(res.status).toBe(409);
    expect(errorOf(res.body)).toMatchObject({ code: "already_member", field: "email" });
  });

  it("escapes studio names in the HTML of the mail", async () => {
    const owner = await makeUser();
    const ownerCookie = await sessionCookie(owner);
    const studioId = ((await call(studiosRoute.POST, { method: "POST", path: "/api/v1/studios", cookie: ownerCookie, body: { name: "<b>Crate</b> & Co" } })).body as { studio: { id: string } }).studio.id;
    const email = uniqueEmail("escape");
    await call(invitesRoute.POST, { method: "POST", path: "/x", params: { studioId }, cookie: ownerCookie, body: { email, role: "engineer" } });
    const mail = await latestMailTo(email);
    expect(mail.html).toContain("&lt;b&gt;Crate&lt;/b&gt; &amp; Co");
    expect(mail.html).not.toContain("<b>Crate</b>");
  });

  it("a magic link works once", async () => {
    const email = uniqueEmail("once");
    const { csrfToken, cookie } = await csrf();
    await nextAuth(["signin", "email"], { method: "POST", form: { csrfToken, email, callbackUrl: `${TEST_BASE_URL}/studios`, json: "true" }, cookie });
    await settleAfterResponse();
    const link = new URL((await latestMailTo(email)).links.find((l) => l.includes("/api/auth/callback/email"))!);
    const first = await nextAuth(["callback", "email"], { search: link.search });
    expect(first.headers.getSetCookie().some((c) => c.startsWith("next-auth.session-token="))).toBe(true);
    const second = await nextAuth(["callback", "email"], { search: link.search });
    expect(second.headers.getSetCookie().some((c) => c.startsWith("next-auth.session-token="))).toBe(false);
    expect(second.headers.get("location")).toContain("error=Verification");
  });
});
