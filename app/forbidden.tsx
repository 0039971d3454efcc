import { Forbidden } from "@/components/forbidden";

/** Rendered with HTTP 403 whenever a page guard calls forbidden(): signed in, but the role does not allow it. */
export default function ForbiddenPage() {
  return (
    <Forbidden reason="You are signed in, but your role does not include this page. Studio pages that change members or API tokens need the owner role; the admin console needs a platform admin. Ask an owner of the studio if you need it." />
  );
}
