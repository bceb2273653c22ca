import { Link } from "react-router";
import { recordLink } from "#app/utils/record-link.ts";

/** A message with the address of an existing record in it ("… already in the registry: /determinations/42"), that address as a link. */
export function RecordLinkText({ text }: { text: string }) {
  const link = recordLink(text);
  if (!link) return <>{text}</>;
  return (
    <>
      {link.before}
      <Link to={link.href} data-testid="existing-record-link">
        {link.href}
      </Link>
      {link.after}
    </>
  );
}
