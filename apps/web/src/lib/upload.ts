import { ApiError, csrfHeader, errorFrom } from '@/lib/api-client';

interface Schema<T> {
  parse(data: unknown): T;
}

export interface UploadRequest<T> {
  /** One file, or several sent under the same field. */
  file: File | File[];
  /** The multipart field the API reads; `file` unless told otherwise. */
  field?: string;
  /** Text fields sent beside the file(s). */
  fields?: Record<string, string>;
  query?: Record<string, string | undefined>;
  schema: Schema<T>;
  /** Called as the file goes out, with the share sent so far (0–1). */
  onProgress?: (fraction: number) => void;
  signal?: AbortSignal;
}

/**
 * Posts one file as multipart. Only for uploads that should show their progress: fetch cannot
 * report it, so this uses XMLHttpRequest — with the same session cookie, CSRF header and ApiError
 * as `apiRequest`, which stays the way to send everything else.
 */
export function uploadFile<T>(path: string, { file, field = 'file', fields, query, schema, onProgress, signal }: UploadRequest<T>): Promise<T> {
  const search = new URLSearchParams();
  for (const [key, value] of Object.entries(query ?? {})) if (value !== undefined && value !== '') search.set(key, value);
  const qs = search.toString();
  const url = `/api${path}${qs ? `?${qs}` : ''}`;
  const form = new FormData();
  for (const f of Array.isArray(file) ? file : [file]) form.append(field, f, f.name);
  for (const [name, value] of Object.entries(fields ?? {})) form.append(name, value);

  return new Promise<T>((resolve, reject) => {
    if (signal?.aborted) return reject(new DOMException('The upload was cancelled', 'AbortError'));
    const xhr = new XMLHttpRequest();
    xhr.open('POST', url);
    xhr.withCredentials = true;
    xhr.setRequestHeader('Accept', 'application/json');
    for (const [name, value] of Object.entries(csrfHeader())) xhr.setRequestHeader(name, value);

    xhr.upload.onprogress = (event) => {
      if (event.lengthComputable && event.total > 0) onProgress?.(event.loaded / event.total);
    };
    xhr.onload = async () => {
      if (xhr.status < 200 || xhr.status >= 300) {
        reject(await errorFrom(new Response(xhr.responseText, { status: xhr.status, statusText: xhr.statusText })));
        return;
      }
      onProgress?.(1);
      try {
        resolve(schema.parse(JSON.parse(xhr.responseText)));
      } catch {
        reject(
          new ApiError({
            status: xhr.status,
            code: 'internal',
            message: 'The server sent an answer this page does not understand. Reloading the page may help.',
          }),
        );
      }
    };
    xhr.onerror = () =>
      reject(new ApiError({ status: 0, code: 'unavailable', message: 'Evenhand could not be reached. Check your connection and try again.' }));
    xhr.onabort = () => reject(new DOMException('The upload was cancelled', 'AbortError'));
    signal?.addEventListener('abort', () => xhr.abort(), { once: true });
    xhr.send(form);
  });
}
