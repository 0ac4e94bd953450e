import { createHash } from 'node:crypto';
import canonicalize from 'canonicalize';

/** SHA-256 (hex) of the RFC 8785 canonical JSON of a value: the same content always hashes the same. */
export function canonicalSha256(value: unknown): string {
  const json = canonicalize(value);
  if (json === undefined) throw new Error('value has no JSON form');
  return createHash('sha256').update(json).digest('hex');
}
