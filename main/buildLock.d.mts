/** Types of main/buildLock.mjs (plain JavaScript, see there). */
export function buildUnderLock(
  lockDir: string,
  staleReason: () => Promise<string | null>,
  build: (reason: string) => Promise<void>,
): Promise<boolean>;
