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

export function useStudios() {
  return useQuery({
    queryKey: queryKeys.studios,
    queryFn: async () => (await apiFetch<{ studios: StudioSummary[] }>("/api/v1/studios")).studios,
  });
}

export function useStudio(studioId: string) {
  return useQuery({ queryKey: queryKeys.studio(studioId), queryFn: () => apiFetch<StudioDetail>(studioApiPath(studioId)) });
}

export function useMembers(studioId: string) {
  return useQuery({
    queryKey: queryKeys.members(studioId),
    queryFn: async () => (await apiFetch<{ members: Member[] }>(`${studioApiPath(studioId)}/members`)).members,
  });
}

export function useInvites(studioId: string, enabled = true) {
  return useQuery({
    queryKey: queryKeys.invites(studioId),
    queryFn: async () => (await apiFetch<{ invites: Invite[] }>(`${studioApiPath(studioId)}/invites`)).invites,
    enabled,
  });
}

export function useTokens(studioId: string, enabled = true) {
  return useQuery({
    queryKey: queryKeys.tokens(studioId),
    queryFn: async () => (await apiFetch<{ tokens: ApiToken[] }>(`${studioApiPath(studioId)}/tokens`)).tokens,
    enabled,
  });
}
