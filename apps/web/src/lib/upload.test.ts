import { messageResponseSchema } from '@evenhand/entities';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { ApiError } from '@/lib/api-client';
import { uploadFile } from '@/lib/upload';

/** A stand-in XMLHttpRequest that records what is sent and answers as told. */
class FakeXhr {
  static last: FakeXhr;
  method = '';
  url = '';
  withCredentials = false;
  headers: Record<string, string> = {};
  body: unknown;
  status = 0;
  statusText = '';
  responseText = '';
  upload: { onprogress: ((e: { lengthComputable: boolean; loaded: number; total: number }) => void) | null } = { onprogress: null };
  onload: (() => void) | null = null;
  onerror: (() => void) | null = null;
  onabort: (() => void) | null = null;
  constructor() {
    FakeXhr.last = this;
  }
  open(method: string, url: string) {
    this.method = method;
    this.url = url;
  }
  setRequestHeader(name: string, value: string) {
    this.headers[name] = value;
  }
  send(body: unknown) {
    this.body = body;
  }
  abort() {
    this.onabort?.();
  }
  answer(status: number, body: unknown) {
    this.status = status;
    this.responseText = typeof body === 'string' ? body : JSON.stringify(body);
    this.onload?.();
  }
}

beforeEach(() => {
  vi.stubGlobal('XMLHttpRequest', FakeXhr);
  document.cookie = 'evenhand_csrf=token-from-cookie';
});

afterEach(() => {
  vi.unstubAllGlobals();
  document.cookie = 'evenhand_csrf=; expires=Thu, 01 Jan 1970 00:00:00 GMT';
});

const file = new File(['student_code,score\nLV-1,5\n'], 'scores.csv', { type: 'text/csv' });

describe('uploadFile', () => {
  it('posts the file as multipart with the session cookie and the CSRF header, and reports progress', async () => {
    const progress: number[] = [];
    const done = uploadFile('/score-sheets/s1/upload', { file, query: { dryRun: 'true' }, schema: messageResponseSchema, onProgress: (f) => progress.push(f) });
    const xhr = FakeXhr.last;
    expect(xhr.method).toBe('POST');
    expect(xhr.url).toBe('/api/score-sheets/s1/upload?dryRun=true');
    expect(xhr.withCredentials).toBe(true);
    expect(xhr.headers['X-CSRF-Token']).toBe('token-from-cookie');
    expect((xhr.body as FormData).get('file')).toBeInstanceOf(File);
    xhr.upload.onprogress?.({ lengthComputable: true, loaded: 50, total: 200 });
    xhr.answer(200, { message: 'ok' });
    await expect(done).resolves.toEqual({ message: 'ok' });
    expect(progress).toEqual([0.25, 1]);
  });

  it('turns a refusal into the same ApiError as every other call, with its row details', async () => {
    const done = uploadFile('/score-sheets/s1/upload', { file, schema: messageResponseSchema });
    FakeXhr.last.answer(400, {
      error: { code: 'validation_failed', message: '1 problem(s) found; nothing was saved', details: { rows: [{ row: 3, column: 'score', message: 'Bad' }] } },
    });
    const error = await done.catch((e: unknown) => e);
    expect(error).toBeInstanceOf(ApiError);
    expect(error).toMatchObject({ status: 400, code: 'validation_failed', details: { rows: [{ row: 3, column: 'score', message: 'Bad' }] } });
  });

  it('maps a bare 413 from a proxy to payload_too_large, and a network failure to unavailable', async () => {
    const tooLarge = uploadFile('/x', { file, schema: messageResponseSchema });
    FakeXhr.last.answer(413, '<html>Request Entity Too Large</html>');
    await expect(tooLarge).rejects.toMatchObject({ status: 413, code: 'payload_too_large' });

    const offline = uploadFile('/x', { file, schema: messageResponseSchema });
    FakeXhr.last.onerror?.();
    await expect(offline).rejects.toMatchObject({ status: 0, code: 'unavailable' });
  });

  it('stops when its signal aborts', async () => {
    const controller = new AbortController();
    const done = uploadFile('/x', { file, schema: messageResponseSchema, signal: controller.signal });
    controller.abort();
    await expect(done).rejects.toMatchObject({ name: 'AbortError' });
  });
});
