/**
 * Why the composer's save button is greyed out, in words beside it: a disabled button with no
 * reason leaves an author guessing which of a long form's fields is missing. Pure, for its test.
 */
export function saveBlockedReason(s: { settingsValid: boolean; title: string; layerUnavailable: boolean }): string | null {
  if (!s.title.trim()) return 'Give the figure a title first.';
  if (s.layerUnavailable) return 'A panel shows a layer its run does not have; choose another layer.';
  if (!s.settingsValid) return 'Fix the settings the proof lists first.';
  return null;
}
