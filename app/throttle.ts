// Sign-in throttling policy (pure). Repeated failures slow sign-in down; they never lock the
// account. See docs/decisions/006-accounts.md.

export const THROTTLE = {
  /** Failures older than this are forgotten. */
  windowMinutes: 15,
  /** Failures allowed per e-mail (whether or not an account has it) before waits begin. */
  freePerAccount: 5,
  /** Failures allowed per client address before waits begin (many people may share one address). */
  freePerAddress: 20,
  /** The longest wait asked for between attempts. */
  maxWaitSeconds: 300,
} as const;

/**
 * Seconds still to wait before another attempt: after `free` failures the n-th further failure
 * asks for 2^n seconds (1, 2, 4, … capped) counted from the latest failure.
 */
export function requiredWaitSeconds(failures: number, lastFailureAt: Date | null, now: Date, free: number): number {
  if (failures < free || !lastFailureAt) return 0;
  const wait = Math.min(2 ** (failures - free), THROTTLE.maxWaitSeconds);
  const elapsed = (now.getTime() - lastFailureAt.getTime()) / 1000;
  return Math.max(0, Math.ceil(wait - elapsed));
}
