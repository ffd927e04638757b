import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    testTimeout: 60_000,
    pool: 'forks',
    projects: [
      { extends: true, test: { name: 'unit', include: ['test/**/*.test.ts'], exclude: ['test/fuzz/**'] } },
      // Fuzzing: every case must stay within a 512 MB heap (the suite checks the limit is in force).
      { extends: true, test: { name: 'fuzz', include: ['test/fuzz/**/*.test.ts'], execArgv: ['--max-old-space-size=512'] } },
    ],
  },
});
