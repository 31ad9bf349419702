// Text into HTML: every character with a meaning in markup or attributes is escaped (notes and channel names are
// the operator's free text).
export function esc(text: unknown): string {
  return String(text ?? '').replace(/[&<>"'`]/g, (c) => `&#${c.charCodeAt(0)};`);
}
