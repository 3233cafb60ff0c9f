/**
 * Throttling of failed sign-ins per address: after `slowAfter` failures within the
 * window each attempt waits longer (0.25 s doubling, at most 4 s); after `lockAfter`
 * the address is refused until the window has passed since those failures. A
 * successful sign-in starts the count afresh. Every attempt is recorded.
 */
export const throttle = { windowMinutes: 15, slowAfter: 3, lockAfter: 8, maxDelayMs: 4000 } as const;

export const signInMessages = {
  wrong: "That e-mail and password do not match an account.",
  inactive: "This account has been deactivated. Ask the lab's admin if you need access again.",
  locked: `Too many failed sign-ins for this address. Try again in ${throttle.windowMinutes} minutes, or reset your password.`,
} as const;

export function throttleDelayMs(recentFailures: number): number {
  if (recentFailures < throttle.slowAfter) return 0;
  return Math.min(throttle.maxDelayMs, 250 * 2 ** (recentFailures - throttle.slowAfter));
}
