"use client";

import { useQuery } from "@tanstack/react-query";
import { apiFetch } from "@/lib/ui/api";
import type { ApiToken, Invite, Member, StudioDetail, StudioSummary } from "@/lib/ui/types";

/** One query key per API resource, so a mutation can invalidate exactly what it changed. */
export const queryKeys = {
  me: ["me"] as const,
  studios: ["studios"] as const,
  studio: (studioId: string) => ["studio", studioId] as const,
  members: (studioId: string) => ["studio", studioId, "members"] as const,
  invites: (studioId: string) => ["studio", studioId, "invites"] as const,
  tokens: (studioId: string) => ["studio", studioId, "tokens"] as const,
  adminStudios: ["admin", "studios"] as const,
  adminUsers: ["admin", "users"] as const,
  mail: ["dev", "mail"] as const,
};

export const studioApiPath = (studioId: string) => `/api/v1/studios/${encodeURIComponent(studioId)}`;

/**
 * The query options that seed a query with the server page's copy of its answer (nothing when the
 * page sent none): the first paint shows the data, and the query refetches it as it would anyway.
 */
export function seededBy<T>(initial: T | undefined) {
  return initial === undefined ? {} : { initialData: initial, initialDataUpdatedAt: () => Date.now() };
}

/**
 * `initial…` arguments below are the server page's copy of the same answer: the first paint shows
 * the data (no loading row and no request after hydration); the query keeps it current as before.
 */
export function useStudios(initialStudios?: StudioSummary[]) {
  return useQuery({
    queryKey: queryKeys.studios,
    queryFn: async () => (await apiFetch<{ studios: StudioSummary[] }>("/api/v1/studios")).studios,
    ...seededBy(initialStudios),
  });
}

export function useStudio(studioId: string) {
  return useQuery({ queryKey: queryKeys.studio(studioId), queryFn: () => apiFetch<StudioDetail>(studioApiPath(studioId)) });
}

export function useMembers(studioId: string, initialMembers?: Member[]) {
  return useQuery({
    queryKey: queryKeys.members(studioId),
    queryFn: async () => (await apiFetch<{ members: Member[] }>(`${studioApiPath(studioId)}/members`)).members,
    ...seededBy(initialMembers),
  });
}

export function useInvites(studioId: string, enabled = true, initialInvites?: Invite[]) {
  return useQuery({
    queryKey: queryKeys.invites(studioId),
    queryFn: async () => (await apiFetch<{ invites: Invite[] }>(`${studioApiPath(studioId)}/invites`)).invites,
    enabled,
    ...seededBy(initialInvites),
  });
}

export function useTokens(studioId: string, enabled = true, initialTokens?: ApiToken[]) {
  return useQuery({
    queryKey: queryKeys.tokens(studioId),
    queryFn: async () => (await apiFetch<{ tokens: ApiToken[] }>(`${studioApiPath(studioId)}/tokens`)).tokens,
    enabled,
    ...seededBy(initialTokens),
  });
}
