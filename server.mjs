// Production server: Express serving the React Router build. Compression skips server-sent events, which
// must stream unbuffered; static assets under /assets are fingerprinted and cached for a year.
// NODE_ENV must be set before React loads (static imports would be hoisted above this line).
// WEB_CONCURRENCY=N (default 1) runs N worker processes sharing the port, e.g. one per core: they keep no
// state besides the database and the storage module, like several machines would.
process.env.NODE_ENV ??= "production";
const { default: cluster } = await import("node:cluster");
/** The server build, once loaded (the SIGTERM handler asks it to close its resources). */
let build;
const workers = Math.max(1, Number(process.env.WEB_CONCURRENCY ?? 1) || 1);
if (workers > 1 && cluster.isPrimary) {
  // The first worker applies migrations (and seeds the demo when asked) before it listens; the others start
  // after it, so they find that work done.
  let stopping = false;
  // Each worker's JavaScript heap is capped (WORKER_HEAP_MB, default 256; 0 keeps V8's own limit, which on a
  // large machine is several GB). Under load a worker holds about 60 MB of live objects (heap snapshots,
  // docs/benchmarks.md); without a cap V8 lets garbage build up to hundreds of MB before it collects, which on
  // a small shop server competes for memory like a leak. A limit given in NODE_OPTIONS or on the command line wins.
  const heapMb = Number(process.env.WORKER_HEAP_MB ?? 256);
  const limited = [...process.execArgv, ...(process.env.NODE_OPTIONS ?? "").split(/\s+/)].some((a) =>
    a.startsWith("--max-old-space-size"),
  );
  if (heapMb > 0 && !limited)
    cluster.setupPrimary({ execArgv: [...process.execArgv, `--max-old-space-size=${heapMb}`] });
  const first = cluster.fork();
  first.once("listening", () => {
    for (let i = 1; i < workers; i++) cluster.fork();
  });
  cluster.on("exit", (worker, code, signal) => {
    if (stopping) return;
    console.error(`worker ${worker.process.pid} ended (${signal ?? code}); starting another`);
    cluster.fork();
  });
  // The primary hands connections to the workers, so it waits for them to end (or 5 s) before it goes.
  const stop = () => {
    if (stopping) return;
    stopping = true;
    const alive = () => Object.values(cluster.workers ?? {}).filter((w) => w && !w.isDead());
    if (!alive().length) process.exit(0);
    cluster.on("exit", () => {
      if (!alive().length) process.exit(0);
    });
    for (const w of alive()) w.kill("SIGTERM");
    setTimeout(() => process.exit(0), 5000).unref();
  };
  process.on("SIGTERM", stop);
  process.on("SIGINT", stop);
} else {
  // Ending through exit() lets Node finish its own work on the way out (e.g. a --cpu-prof profile), after the
  // app has closed its insights read threads (they give up waiting after 2 s; this after 2.5 s).
  const end = async () => {
    await Promise.race([
      build?.entry?.module?.closeReportThreads?.(),
      new Promise((resolve) => setTimeout(resolve, 2500).unref()),
    ]).catch(() => {});
    process.exit(0);
  };
  // A worker whose primary is gone has no one to hand it connections: end with it.
  if (cluster.isWorker) process.on("disconnect", end);
  process.on("SIGTERM", end);
  await serve();
}

async function serve() {
  const { createRequestHandler } = await import("@react-router/express");
  const { default: compression } = await import("compression");
  const { default: express } = await import("express");

  const port = Number(process.env.PORT ?? 3000);
  const host = process.env.HOST ?? "0.0.0.0";

  const buildDir = process.env.RAILWISE_BUILD_DIR ?? "build";
  build = await import(new URL(`./${buildDir}/server/index.js`, import.meta.url).href);

  const app = express();
  app.disable("x-powered-by");
  app.set("trust proxy", process.env.TRUST_PROXY === "1");
  app.use(
    compression({
      filter: (req, res) => !String(res.getHeader("Content-Type") ?? "").includes("text/event-stream") && compression.filter(req, res),
    }),
  );
  app.use("/assets", express.static(`${buildDir}/client/assets`, { immutable: true, maxAge: "1y" }));
  app.use(express.static(`${buildDir}/client`, { maxAge: "1h" }));
  app.all(
    "*",
    createRequestHandler({
      build,
      getLoadContext: (req) => ({ clientAddress: req.ip ?? req.socket.remoteAddress ?? "unknown" }),
    }),
  );

  app.listen(port, host, () => {
    const shown = host === "0.0.0.0" ? "localhost" : host;
    if (!cluster.isWorker || cluster.worker?.id === 1)
      console.log(`Railwise is serving on http://${shown}:${port}${workers > 1 ? ` (${workers} worker processes)` : ""}`);
  });
}
