import type { AuditAction } from "@/lib/audit/audit";

/** Labels of the audit actions (the keys are lib/audit's AUDIT_ACTIONS; the type keeps them in step). */
export const AUDIT_ACTION_LABELS: Record<AuditAction, string> = {
  "quota.update": "Quota change",
  "credit.adjust": "Credit adjustment",
  "studio.suspend": "Suspension",
  "studio.reinstate": "Suspension lifted",
  "member.role_change": "Role change",
  "member.remove": "Member removed",
  "token.create": "Token created",
  "token.revoke": "Token revoked",
  "user.platform_role": "Platform role change",
  "payment.mismatch": "Payment not matching its pack",
  "payment.purchase": "Pack bought",
  "invite.create": "Invitation sent",
  "invite.withdraw": "Invitation withdrawn",
  "invite.accept": "Invitation accepted",
  "payment.refund": "Refund issued",
  "meter_event.retry": "Meter event retried",
  "meter_event.rekey": "Meter event re-keyed",
  "billing.details": "Billing details changed",
  "overage.switch": "Overage switched by the owner",
};
