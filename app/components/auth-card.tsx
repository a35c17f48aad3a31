import { Link } from "react-router";
import { Logo } from "./logo";

export function AuthCard({
  title,
  children,
  footer,
}: {
  title: string;
  children: React.ReactNode;
  footer?: React.ReactNode;
}) {
  return (
    <main className="flex min-h-screen items-center justify-center p-6">
      <div className="w-full max-w-md">
        <Link to="/" className="mb-6 inline-block" aria-label="Railwise home">
          <Logo className="h-8" />
        </Link>
        <div className="card shadow-sm">
          <h1 className="mb-4 text-xl font-semibold">{title}</h1>
          {children}
        </div>
        {footer ? <div className="mt-4 text-muted text-sm">{footer}</div> : null}
      </div>
    </main>
  );
}

export function FormError({ errors }: { errors?: string[] }) {
  if (!errors?.length) return null;
  return (
    <div role="alert" className="rounded-md border border-bad bg-bad-soft px-3 py-2 text-sm">
      {errors.join(" ")}
    </div>
  );
}
