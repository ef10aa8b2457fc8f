/** Only same-site relative paths are accepted as a place to return to after sign-in. */
export function safeRedirect(to: FormDataEntryValue | string | null | undefined, fallback = "/") {
  if (typeof to !== "string" || !to.startsWith("/") || to.startsWith("//") || to.startsWith("/\\")) return fallback;
  return to;
}
