// `npm run bench -w apps/api [-- upload|run …]`: the API benchmarks, each a ratio to a baseline measured
// in the same run (never a timed test). With no names, all of them.
import { benchRosterImport } from './roster-import.js';
import { benchRun } from './run.js';
import { benchThroughput } from './throughput.js';
import { benchUpload } from './upload.js';

const all: Record<string, () => Promise<void>> = {
  upload: benchUpload,
  run: () => benchRun(),
  'yes-no': () => benchRun('yes-no'),
  'two-level': () => benchRun('two-level'),
  roster: benchRosterImport,
  throughput: benchThroughput,
};
// `run` already includes the yes/no and two-level parts, so they are only run on their own when named.
const separate = new Set(['yes-no', 'two-level']);
const chosen = process.argv.slice(2).filter((a) => a in all);
for (const name of chosen.length ? chosen : Object.keys(all).filter((n) => !separate.has(n))) await all[name]();
