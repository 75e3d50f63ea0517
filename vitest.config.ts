// vitest's default reporter, then one plain closing line "N passed, N failed[, N skipped]" (test/reporters/).
import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    reporters: ['default', './test/reporters/summary-line.ts'],
  },
});
