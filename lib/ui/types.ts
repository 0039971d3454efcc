/** Response shapes of the JSON API as the pages read them (see the shared contract). */
export type StudioRole = "owner" | "engineer" | "finance";

export const STUDIO_ROLES: readonly StudioRole[] = ["owner", "engineer", "finance"];

export const ROLE_DESCRIPTIONS: Record<StudioRole, string> = {
  owner: "Owners manage members, invitations and API tokens, and run sweeps.",
  engineer: "Engineers build scenarios and run sweeps.",
  finance: "Finance members see usage, invoices and credit packs.",
};

export type StudioSummary = { id: string; name: string; role: StudioRole };

export type StudioDetail = {
  studio: { id: string; name: string; status: string; createdAt: string };
  role: StudioRole | null;
  /** Present while the studio is suspended: the admin's reason and since when. */
  suspension?: { reason: string; since: string } | null;
};

export type Member = { userId: string; email: string; name: string | null; role: StudioRole; joinedAt: string };

export type Invite = { id: string; email: string; role: StudioRole; expiresAt: string; createdAt?: string };

export type ApiToken = {
  id: string;
  name: string;
  scopes: ("read" | "write")[];
  prefix: string;
  createdAt: string;
  lastUsedAt: string | null;
  revokedAt: string | null;
};

export type PublicInvite = {
  studioName: string;
  role: StudioRole;
  email: string;
  expired: boolean;
  accepted?: boolean;
};

export type MailMessage = {
  id: string;
  to: string;
  subject: string;
  text: string;
  html: string | null;
  links: string[];
  receivedAt: string;
};

export type AdminUser = { id: string; email: string; name: string | null; isAdmin: boolean; createdAt?: string; studioCount?: number };
