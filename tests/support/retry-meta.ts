/**
 * vitest setup (vitest.config.ts `setupFiles`): records in each test's `meta` how many retries it
 * is allowed (`retry`) and how many it used (`retried`), so that .ci/run can count them from the
 * JSON report (whose entries carry `meta` but not the retry figures).
 */
import { afterEach } from 'vitest';

declare module 'vitest' {
  interface TaskMeta {
    retry?: number;
    retried?: number;
  }
}

afterEach(({ task }) => {
  const retry = typeof task.retry === 'number' ? task.retry : 0;
  task.meta.retry = retry;
  task.meta.retried = task.result?.retryCount ?? 0;
});
