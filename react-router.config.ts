import type { Config } from "@react-router/dev/config";

export default {
  ssr: true,
  // A separate build folder lets several builds (e.g. parallel test runs) live side by side.
  buildDirectory: process.env.RAILWISE_BUILD_DIR ?? "build",
} satisfies Config;
