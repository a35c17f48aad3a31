import { eraseExpiredPersonalData } from "./customers.server";

// Background work of a running server: once a day, erase personal data past each shop's retention period.
// Imported for its effect by the jobs route; `npm run task:retention` runs the same function on demand.
const DAY = 86_400_000;
const flag = globalThis as typeof globalThis & { __railwiseRetentionTimer?: ReturnType<typeof setInterval> };

if (
  process.env.NODE_ENV !== "test" &&
  process.env.RETENTION_TIMER !== "0" &&
  !flag.__railwiseRetentionTimer
) {
  const run = () =>
    eraseExpiredPersonalData()
      .then((r) => {
        if (r.jobsErased) console.log(`Retention: erased personal data of ${r.jobsErased} closed jobs.`);
      })
      .catch((error) => console.error("Retention task failed", error));
  flag.__railwiseRetentionTimer = setInterval(run, DAY);
  flag.__railwiseRetentionTimer.unref();
  setTimeout(run, 60_000).unref();
}
