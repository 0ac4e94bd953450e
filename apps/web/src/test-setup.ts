import '@testing-library/jest-dom/vitest';
import { cleanup, configure } from '@testing-library/react';
import { afterEach } from 'vitest';

// Signed-in pages load through their routes' `lazy`, and in the test run a page's first import compiles its modules:
// give `findBy…` more than the default second.
configure({ asyncUtilTimeout: 10_000 });

afterEach(() => {
  cleanup();
});
