import { isRouteErrorResponse, Link } from "react-router";

/** The one error display every route's ErrorBoundary renders. */
export function ErrorView({ error }: { error: unknown }) {
  let title = "Something went wrong";
  let detail = "The page could not be shown. Try again, or go back to where you were.";
  let stack: string | undefined;
  if (isRouteErrorResponse(error)) {
    // React Router's own answers (no route matches the address) carry a message for developers.
    const internal = (error as { internal?: boolean }).internal === true;
    if (error.status === 404) {
      title = "Not found";
      detail = !internal && typeof error.data === "string" && error.data ? error.data : "There is nothing at this address.";
    } else if (error.status === 403) {
      title = "Not allowed";
      detail = typeof error.data === "string" && error.data ? error.data : "Your roles do not give access to this page.";
    } else {
      title = `${error.status} ${error.statusText}`;
      if (typeof error.data === "string" && error.data) detail = error.data;
    }
  } else if (import.meta.env.DEV && error instanceof Error) {
    detail = error.message;
    stack = error.stack;
  }
  return (
    <section role="alert" className="mx-auto max-w-2xl py-16">
      <p className="text-sm tracking-widest text-muted uppercase">Thawline</p>
      <h1 className="mt-2">{title}</h1>
      <p className="mt-4 text-lg">{detail}</p>
      {stack ? <pre className="mt-6 overflow-x-auto rounded bg-ice-50 p-4 text-xs">{stack}</pre> : null}
      <p className="mt-8">
        <Link to="/">Back to the start page</Link>
      </p>
    </section>
  );
}
