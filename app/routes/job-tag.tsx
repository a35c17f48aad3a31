import { and, eq } from "drizzle-orm";
import QRCode from "qrcode";
import { requireMember } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { appUrl } from "~/server/email.server";
import { getCustomer, getJob } from "~/server/jobs.server";
import { intakeTerms } from "~/lib/intake-terms";
import { formatMoney } from "~/lib/money";
import { boards } from "~/server/schema.server";
import type { Route } from "./+types/job-tag";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { shop } = await requireMember(request, { permission: "view:jobs" });
  const job = await getJob(shop.id, params.jobId);
  if (!job) throw new Response("That job was not found in your shop.", { status: 404 });
  const [customer, board] = await Promise.all([
    getCustomer(shop.id, job.customerId),
    job.boardId
      ? db
          .select()
          .from(boards)
          .where(and(eq(boards.shopId, shop.id), eq(boards.id, job.boardId)))
          .get()
      : undefined,
  ]);
  // The QR code opens the job for members of the shop (the page itself asks them to sign in).
  const link = appUrl(request, `/jobs/${job.id}`);
  const qr = await QRCode.toDataURL(link, { margin: 1, width: 200, errorCorrectionLevel: "M" });
  return {
    shop: { name: shop.name },
    job: {
      number: job.number,
      serial: job.serial,
      complaint: job.complaint,
      accessories: job.accessories,
      conditionNotes: job.conditionNotes,
      fee: job.chargeable ? formatMoney(job.diagnosticFeeMinor, shop.currency) : "free (warranty)",
      takenIn: job.createdAt.toISOString().slice(0, 10),
      unclaimedDays: job.unclaimedDays ?? undefined,
    },
    customer: customer ? { name: customer.name, phone: customer.phone, email: customer.email } : null,
    board: board ? `${board.maker} ${board.model} · ${board.boardNumber}` : null,
    qr,
    link,
  };
}

export default function JobTagRoute({ loaderData }: Route.ComponentProps) {
  const { shop, job, customer, board, qr, link } = loaderData;
  return (
    <div className="mx-auto max-w-3xl">
      <div className="no-print mb-4 flex gap-2">
        <button type="button" className="btn btn-primary" onClick={() => window.print()}>
          Print
        </button>
        <a className="btn" href={link}>
          Back to the job
        </a>
      </div>
      {/* The bench tag: stays with the device. */}
      <section
        aria-label="Bench tag"
        className="mb-6 flex items-center gap-4 rounded-lg border-2 border-ink bg-panel p-4 print:break-after-page"
      >
        <img src={qr} alt={`QR code linking to job ${job.number}`} className="h-32 w-32" />
        <div>
          <p className="text-sm text-muted">{shop.name}</p>
          <p className="font-mono text-4xl font-semibold">#{job.number}</p>
          <p className="text-sm">{board ?? "Board not in the library"}</p>
          <p className="font-mono text-sm">S/N {job.serial}</p>
          <p className="text-sm">Taken in {job.takenIn}</p>
        </div>
      </section>
      {/* The intake receipt: goes home with the customer. */}
      <section aria-label="Intake receipt" className="rounded-lg border border-line bg-panel p-6">
        <h1 className="text-xl font-semibold">
          {shop.name} · intake receipt for job <span className="font-mono">#{job.number}</span>
        </h1>
        <dl className="mt-3 grid grid-cols-2 gap-2 text-sm">
          <div>
            <dt className="text-muted">Customer</dt>
            <dd>{customer ? `${customer.name}${customer.phone ? ` · ${customer.phone}` : ""}` : "—"}</dd>
          </div>
          <div>
            <dt className="text-muted">Device</dt>
            <dd>
              {board ?? "—"} · S/N {job.serial}
            </dd>
          </div>
          <div>
            <dt className="text-muted">Complaint</dt>
            <dd>{job.complaint}</dd>
          </div>
          <div>
            <dt className="text-muted">Condition and accessories</dt>
            <dd>
              {job.conditionNotes || "—"} · {job.accessories || "no accessories"}
            </dd>
          </div>
          <div>
            <dt className="text-muted">Agreed diagnostic fee</dt>
            <dd>{job.fee} (before tax)</dd>
          </div>
          <div>
            <dt className="text-muted">Taken in</dt>
            <dd>{job.takenIn}</dd>
          </div>
        </dl>
        <h2 className="mt-4 font-medium">Terms the customer accepted</h2>
        <ul className="list-disc pl-5 text-sm">
          {intakeTerms(shop.name, job.unclaimedDays).map((t) => (
            <li key={t}>{t}</li>
          ))}
        </ul>
        <p className="mt-6 text-sm">Customer signature: ______________________________</p>
      </section>
    </div>
  );
}

export const meta: Route.MetaFunction = ({ data: d }) => [
  { title: d ? `Tag for job #${d.job.number} · Railwise` : "Tag · Railwise" },
];
