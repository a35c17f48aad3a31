// Production server: Express serving the React Router build. Compression skips server-sent events, which
// must stream unbuffered; static assets under /assets are fingerprinted and cached for a year.
// NODE_ENV must be set before React loads (static imports would be hoisted above this line).
process.env.NODE_ENV ??= "production";
const { createRequestHandler } = await import("@react-router/express");
const { default: compression } = await import("compression");
const { default: express } = await import("express");

const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST ?? "0.0.0.0";

const buildDir = process.env.RAILWISE_BUILD_DIR ?? "build";
const build = await import(new URL(`./${buildDir}/server/index.js`, import.meta.url).href);

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
  console.log(`Railwise is serving on http://${shown}:${port}`);
});
