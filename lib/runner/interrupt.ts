/**
 * SIGINT and SIGTERM during a run: the first one aborts the run (which stops
 * the driver and the kernel, removes the staging folder and writes nothing);
 * a second one while cleaning up exits at once. Exit codes follow the shell's
 * convention, 128 + signal number (130 for SIGINT, 143 for SIGTERM).
 */
const signals = { SIGINT: 130, SIGTERM: 143, SIGHUP: 129 } as const;
type Caught = keyof typeof signals;

export interface Interruption {
  readonly signal: AbortSignal;
  /** The exit code for the signal received, if any. */
  exitCode(): number | undefined;
  dispose(): void;
}

export function interruptOnSignals(say: (text: string) => void = (t) => process.stderr.write(t + "\n")): Interruption {
  const ac = new AbortController();
  let got: Caught | undefined;
  const handlers = (Object.keys(signals) as Caught[]).map((sig) => {
    const h = () => {
      if (got) process.exit(signals[sig]);
      got = sig;
      say(`${sig}: stopping the kernel and cleaning up (again to quit at once)`);
      ac.abort(sig);
    };
    process.on(sig, h);
    return [sig, h] as const;
  });
  return {
    signal: ac.signal,
    exitCode: () => (got ? signals[got] : undefined),
    dispose: () => handlers.forEach(([sig, h]) => process.off(sig, h)),
  };
}
