import { listCapturedEmail } from "~/server/email.server";
import { mailCaptureOn } from "~/server/env.server";
import type { Route } from "./+types/dev-outbox";

// Development and test mailbox. Answers 404 whenever capture is off, so it never exists in production.
export async function loader() {
  if (!mailCaptureOn()) throw new Response("Not found", { status: 404 });
  return { messages: await listCapturedEmail(100) };
}

export default function DevOutboxRoute({ loaderData }: Route.ComponentProps) {
  const { messages } = loaderData;
  return (
    <main className="mx-auto max-w-3xl p-6">
      <h1 className="mb-1 text-2xl font-semibold">Captured e-mail</h1>
      <p className="mb-6 text-muted text-sm">
        Messages the app would have sent. Only present while mail capture is on.
      </p>
      {messages.length === 0 ? <p>No messages yet.</p> : null}
      <ol className="flex flex-col gap-4">
        {messages.map((m) => (
          <li key={m.id} className="card">
            <p className="text-muted text-xs">
              To {m.to} · {new Date(m.at).toLocaleString()}
            </p>
            <h2 className="font-medium">{m.subject}</h2>
            <pre className="mt-2 font-mono text-sm whitespace-pre-wrap">{m.text}</pre>
          </li>
        ))}
      </ol>
    </main>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Captured e-mail · Railwise" }];
