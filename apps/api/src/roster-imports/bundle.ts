import { createReadStream } from 'node:fs';
import { open as openFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import type { Readable } from 'node:stream';
import type { RequestHandler } from 'express';
import multer from 'multer';
import yauzl from 'yauzl';
import { AppError } from '../errors.js';

/**
 * A OneRoster bundle as uploaded: one zip, or the CSV files themselves. Uploads go to temporary files
 * (never into memory whole) and every file is read as a stream. A zip is checked from its central
 * directory before anything is unpacked: paths, the number of entries, the total unpacked size and each
 * entry's packing ratio are bounded, and yauzl checks that every entry unpacks to its declared size.
 */

export const MAX_UPLOAD_BYTES = 64 * 1024 * 1024;
export const MAX_UNPACKED_BYTES = 512 * 1024 * 1024;
/** CSV text packs 5–20 times (common experience); a far higher ratio is a zip bomb. */
export const MAX_PACKING_RATIO = 200;
const MAX_ENTRIES = 100;
const MAX_FILES = 10;

/** The files Evenhand reads; anything else in a bundle (courses.csv, academicSessions.csv…) is left unread. */
export const ROSTER_FILES = ['manifest.csv', 'orgs.csv', 'classes.csv', 'users.csv', 'enrollments.csv'] as const;
export type RosterFile = (typeof ROSTER_FILES)[number];

export interface Bundle {
  open(name: RosterFile): Promise<Readable>;
  close(): void;
}

/** Up to ten files in multipart field `files`, each written to a temporary file, at most 64 MB each. */
export function bundleUpload(): RequestHandler {
  const parse = multer({ dest: tmpdir(), limits: { fileSize: MAX_UPLOAD_BYTES, files: MAX_FILES, fields: 5, fieldSize: 512 * 1024 } }).array('files', MAX_FILES);
  return (req, res, next) =>
    parse(req, res, (err: unknown) => {
      if (!err) {
        return (req.files as Express.Multer.File[] | undefined)?.length ? next() : next(AppError.validation('Attach the OneRoster zip, or its CSV files, in the form field “files”'));
      }
      if (err instanceof multer.MulterError && err.code === 'LIMIT_FILE_SIZE') {
        return next(new AppError('payload_too_large', `The file is larger than the ${MAX_UPLOAD_BYTES / 1024 / 1024} MB limit`));
      }
      if (err instanceof multer.MulterError) return next(AppError.validation(`The upload was not understood: ${err.message}`));
      next(err);
    });
}

const isZip = async (path: string) => {
  const handle = await openFile(path, 'r');
  try {
    const { buffer, bytesRead } = await handle.read(Buffer.alloc(4), 0, 4, 0);
    return bytesRead === 4 && buffer.equals(Buffer.from([0x50, 0x4b, 0x03, 0x04]));
  } catch {
    return false;
  } finally {
    await handle.close();
  }
};

/** The uploaded files as a bundle; refuses (400) a mix of zip and CSV, a zip with unsafe entries, or a missing file. */
export async function openBundle(files: { path: string; originalname: string }[]): Promise<Bundle> {
  const zips = [];
  for (const f of files) if (await isZip(f.path)) zips.push(f);
  if (zips.length && files.length > 1) throw AppError.validation('Upload either one zip or the CSV files, not both');
  if (zips.length) return openZip(zips[0].path);
  const byName = new Map<string, string>();
  for (const f of files) {
    const name = f.originalname.toLowerCase();
    if (byName.has(name)) throw AppError.validation(`${f.originalname} was uploaded twice`);
    byName.set(name, f.path);
  }
  missing(ROSTER_FILES.filter((n) => !byName.has(n.toLowerCase())));
  return { open: async (name) => createReadStream(byName.get(name.toLowerCase())!), close: () => {} };
}

function missing(names: string[]) {
  if (names.length) {
    throw AppError.validation(`The bundle lacks ${names.join(', ')}`, names.map((n) => ({ path: n, message: 'Missing file' })));
  }
}

const zipRefused = (message: string) => AppError.validation(`The zip was refused: ${message}; nothing was imported`);

async function openZip(path: string): Promise<Bundle> {
  const zip = await new Promise<yauzl.ZipFile>((resolve, reject) =>
    yauzl.open(path, { lazyEntries: true, autoClose: false, strictFileNames: true, validateEntrySizes: true }, (err, z) =>
      err ? reject(zipRefused(err.message)) : resolve(z!),
    ),
  );
  const entries = new Map<string, yauzl.Entry>();
  try {
    if (zip.entryCount > MAX_ENTRIES) throw zipRefused(`it holds more than ${MAX_ENTRIES} entries`);
    let unpacked = 0;
    await new Promise<void>((resolve, reject) => {
      zip.on('error', (err: Error) => reject(err instanceof AppError ? err : zipRefused(err.message)));
      zip.on('end', () => resolve());
      zip.on('entry', (entry: yauzl.Entry) => {
        const name = entry.fileName;
        // yauzl already refuses absolute paths and backslashes; `..` anywhere is refused here too.
        if (name.split('/').includes('..')) return reject(zipRefused(`the entry “${name}” points outside the bundle`));
        if (name.endsWith('/') || name.startsWith('__MACOSX/')) return zip.readEntry();
        unpacked += entry.uncompressedSize;
        if (unpacked > MAX_UNPACKED_BYTES) return reject(zipRefused(`it unpacks to more than ${MAX_UNPACKED_BYTES / 1024 / 1024} MB`));
        if (entry.uncompressedSize > 1024 * 1024 && entry.uncompressedSize / Math.max(entry.compressedSize, 1) > MAX_PACKING_RATIO) {
          return reject(zipRefused(`“${name}” is packed more than ${MAX_PACKING_RATIO} times (a zip bomb?)`));
        }
        const base = name.split('/').pop()!.toLowerCase();
        const known = ROSTER_FILES.find((n) => n.toLowerCase() === base);
        if (known) {
          if (entries.has(known)) return reject(zipRefused(`it holds ${known} twice`));
          entries.set(known, entry);
        }
        zip.readEntry();
      });
      zip.readEntry();
    });
    missing(ROSTER_FILES.filter((n) => !entries.has(n)));
  } catch (err) {
    zip.close();
    throw err;
  }
  return {
    open: (name) =>
      new Promise((resolve, reject) =>
        zip.openReadStream(entries.get(name)!, (err, stream) => (err ? reject(zipRefused(err.message)) : resolve(stream!))),
      ),
    close: () => zip.close(),
  };
}
