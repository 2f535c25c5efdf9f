/**
 * Work a request starts and does not wait for (mail, chiefly), so that its
 * answer takes the same time whatever that work finds. A failure is logged;
 * closing the app waits for what is still running.
 */
export interface Background {
  run(label: string, task: () => Promise<unknown>): void;
  /** Resolves once every task started so far has finished. */
  settled(): Promise<void>;
}

export function backgroundTasks(log: (level: 'warn', message: string, extra?: unknown) => void): Background {
  const running = new Set<Promise<unknown>>();
  return {
    run(label, task) {
      // Started on a later turn of the event loop, so none of it is timed with the request.
      const p: Promise<unknown> = new Promise<void>((resolve) => setImmediate(resolve))
        .then(task)
        .catch((err: unknown) => log('warn', `${label} failed`, err))
        .finally(() => running.delete(p));
      running.add(p);
    },
    async settled() {
      while (running.size > 0) await Promise.allSettled([...running]);
    },
  };
}
