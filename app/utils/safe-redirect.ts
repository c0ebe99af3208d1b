// Only paths on this site are followed after sign-in.
export function safeRedirect(to: string | undefined | null, fallback: string) {
  return to && to.startsWith("/") && !to.startsWith("//") && !to.startsWith("/\\") ? to : fallback;
}
