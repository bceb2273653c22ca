import type { Route } from "./+types/dev.outbox";
import { ErrorView } from "#app/components/error-view.tsx";
import { readFakeOutbox } from "#app/mail/outbox.server.ts";
import { devOutboxOpen } from "#app/utils/env.server.ts";
import { notFound } from "#app/utils/http.server.ts";

export const meta: Route.MetaFunction = () => [
  { title: "Development outbox — Thawline" },
  { name: "robots", content: "noindex" },
];

export async function loader(_: Route.LoaderArgs) {
  // Exists only while mail goes to the local fake (development, demo, tests); with a real mail
  // key it is a 404. While it exists it is open to everyone: it is how one signs in without mail.
  if (!devOutboxOpen()) notFound();
  const { entries, problem } = await readFakeOutbox();
  return {
    problem,
    messages: entries.map((m) => ({
      ...m,
      createdAt: m.createdAt ? `${m.createdAt.slice(0, 19).replace("T", " ")} UTC` : "",
    })),
  };
}

export default function DevOutbox({ loaderData }: Route.ComponentProps) {
  const { messages, problem } = loaderData;
  return (
    <div className="grid gap-6">
      <header>
        <p className="text-sm tracking-widest text-muted uppercase">Development only</p>
        <h1 className="mt-1">Outbox</h1>
        <p className="mt-2 max-w-3xl text-muted">
          This installation does not deliver mail: every message is kept by the local mail fake and listed here, newest first.
          This page disappears once a real mail service is configured.
        </p>
      </header>
      {problem ? (
        <p role="alert" className="rounded border border-caution bg-caution-bg px-4 py-2 text-caution">
          {problem}
        </p>
      ) : null}
      {messages.length === 0 && !problem ? (
        <p className="rounded border border-dashed border-rule px-4 py-8 text-center text-muted">
          No messages yet. Ask for a sign-in code and it will appear here.
        </p>
      ) : null}
      <ol className="grid gap-5">
        {messages.map((m, i) => (
          <li key={m.id} className="card" aria-labelledby={`msg-${m.id}`}>
            <div className="flex flex-wrap items-baseline justify-between gap-2">
              <h2 id={`msg-${m.id}`} className="text-lg">
                {m.subject}
              </h2>
              <span className="text-sm text-muted">{m.createdAt}</span>
            </div>
            <p className="text-sm text-muted">To: {m.to.join(", ")}</p>
            {m.code ? (
              <p className="mt-3">
                Code:{" "}
                <span className="font-mono text-2xl font-bold tracking-[0.2em]" data-testid="outbox-code">
                  {m.code}
                </span>
              </p>
            ) : null}
            {m.links.length ? (
              <ul className="mt-2 grid gap-1 text-sm">
                {m.links.map((link) => (
                  <li key={link} className="break-all">
                    <a href={link}>{link}</a>
                  </li>
                ))}
              </ul>
            ) : null}
            <details className="mt-3" open={i === 0}>
              <summary className="cursor-pointer text-sm font-semibold text-muted">Text and HTML versions</summary>
              <div className="mt-3 grid gap-4 lg:grid-cols-2">
                <pre className="overflow-x-auto rounded bg-ice-50 p-3 text-sm whitespace-pre-wrap">
                  {m.text ?? "(no text version)"}
                </pre>
                {m.html ? (
                  <iframe
                    title={`HTML version of “${m.subject}”`}
                    srcDoc={m.html}
                    sandbox=""
                    className="h-96 w-full rounded border border-rule bg-white"
                  />
                ) : (
                  <p className="text-sm text-muted">(no HTML version)</p>
                )}
              </div>
            </details>
          </li>
        ))}
      </ol>
    </div>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  return <ErrorView error={error} />;
}
