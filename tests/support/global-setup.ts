import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import type { TestProject } from "vitest/node";

declare module "vitest" {
  export interface ProvidedContext {
    sqldPidsFile: string;
  }
}

// libSQL servers started for test files (setup-env.ts) write their process ids here; a file whose tests are all
// skipped runs no afterAll, so the servers left are ended when the whole run ends.
export default function setup(project: TestProject) {
  const dir = mkdtempSync(path.join(tmpdir(), "railwise-vitest-"));
  const file = path.join(dir, "sqld.pids");
  project.provide("sqldPidsFile", file);
  return () => {
    let pids: string[] = [];
    try {
      pids = readFileSync(file, "utf8").split("\n").filter(Boolean);
    } catch {
      // no server was started
    }
    for (const pid of pids) {
      try {
        process.kill(Number(pid), "SIGTERM");
      } catch {
        // already ended
      }
    }
    rmSync(dir, { recursive: true, force: true });
  };
}
