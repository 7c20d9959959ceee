// `npm run --silent cli -- <command> [options]` (CONTRACT.md §2): runs cli/index.ts from the
// engine bundle (scripts/lib/engine-bundle.mjs), rebuilt first when a source file changed.
import { join } from "node:path";
import { pathToFileURL } from "node:url";

import { engineBundle } from "./lib/engine-bundle.mjs";

await import(pathToFileURL(join(await engineBundle(), "cli.mjs")).href);
