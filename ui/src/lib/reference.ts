/**
 * Live reference checks from the UI's unit tests, following the engine's rule
 * (tests/common/mod.rs): the reference Python is `AMBIT_PYTHON`; without it the
 * check is skipped with a NOTICE under a plain `npx vitest run`, and fails
 * when references are required (`AMBIT_REQUIRE_REFERENCES` or `CI` set).
 *
 * Test-only; never imported by the app.
 */
import { execFileSync } from "node:child_process";
import { existsSync } from "node:fs";
import { fileURLToPath } from "node:url";

function required(): boolean {
  const set = (name: string) => {
    const value = process.env[name];
    return value !== undefined && value !== "" && value !== "0" && value !== "false";
  };
  return set("AMBIT_REQUIRE_REFERENCES") || set("CI");
}

/** The reference interpreter, or null (with a notice) when it may be skipped. */
export function referencePython(test: string): string | null {
  const python = process.env.AMBIT_PYTHON;
  if (python) {
    if (!existsSync(python)) throw new Error(`${test}: AMBIT_PYTHON points at ${python}, which does not exist`);
    return python;
  }
  if (required()) {
    throw new Error(`${test}: the Python reference libraries are required here but AMBIT_PYTHON is not set`);
  }
  console.warn(`NOTICE: ${test} skipped: no reference Python (set AMBIT_PYTHON to the reference venv)`);
  return null;
}

/** Runs ui/src/lib/reference/<script> and parses its stdout as JSON. */
export function runReference(python: string, script: string): unknown {
  const path = fileURLToPath(new URL(`./reference/${script}`, import.meta.url));
  return JSON.parse(execFileSync(python, [path], { encoding: "utf8", maxBuffer: 16 << 20 }));
}
