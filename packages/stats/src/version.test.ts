import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { ENGINE_VERSION } from './index.js';

describe('ENGINE_VERSION', () => {
  it('names the package version that results record', () => {
    const pkg = JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8')) as { version: string };
    expect(ENGINE_VERSION).toBe(`evenhand-stats ${pkg.version}`);
  });
});
