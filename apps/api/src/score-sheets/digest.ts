// Where runs/gather.ts and runs/runs.test.ts still import the sheet digest from; it lives in queries.ts.
export { sheetDigestsSql, storeSheetDigests } from './queries.js';
