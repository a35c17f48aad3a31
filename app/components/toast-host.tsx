import { useEffect, useState } from "react";

type Toast = { kind: "success" | "error" | "info"; message: string } | null;

const STYLE = {
  success: "border-ok bg-ok-soft text-ink",
  error: "border-bad bg-bad-soft text-ink",
  info: "border-info bg-info-soft text-ink",
} as const;

export function ToastHost({ toast }: { toast: Toast }) {
  const [shown, setShown] = useState<Toast>(toast);
  useEffect(() => {
    setShown(toast);
    if (!toast) return;
    const t = setTimeout(() => setShown(null), 6000);
    return () => clearTimeout(t);
  }, [toast]);
  return (
    <div
      aria-live="polite"
      className="no-print pointer-events-none fixed right-4 bottom-4 z-50 flex max-w-sm flex-col gap-2"
    >
      {shown ? (
        <div
          role="status"
          className={`pointer-events-auto rounded-md border-l-4 px-4 py-3 shadow-lg ${STYLE[shown.kind]}`}
        >
          <div className="flex items-start gap-3">
            <p className="text-sm">{shown.message}</p>
            <button
              type="button"
              className="text-muted text-sm"
              onClick={() => setShown(null)}
              aria-label="Dismiss"
            >
              ✕
            </button>
          </div>
        </div>
      ) : null}
    </div>
  );
}
