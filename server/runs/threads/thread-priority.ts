import os from 'node:os';

/**
 * Lowers the CPU priority of the calling thread. On Linux a thread's niceness is its own, so a
 * call from a worker thread leaves the process's other threads (the request thread) as they are.
 * Raising priority needs privileges and is never asked for; where the system refuses, nothing changes.
 */
export function lowerThreadPriority(niceness: number) {
  if (niceness <= 0 || process.platform !== 'linux') return;
  try {
    os.setPriority(0, Math.min(19, niceness));
  } catch {
    // a sandbox may forbid it: the fit then runs at normal priority
  }
}
