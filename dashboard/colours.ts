// Trace colours per channel (our own palette; the CSS holds the same values as --ch0..--ch3).
export const CHANNEL_COLOURS = ['#0b6e99', '#c2410c', '#6d28d9', '#3f7f1f', '#a1236b', '#00838f', '#795548', '#455a64'];

export function channelColour(i: number): string {
  return CHANNEL_COLOURS[i % CHANNEL_COLOURS.length];
}

/** The same colour with alpha, for overlays. */
export function withAlpha(hex: string, alpha: number): string {
  const n = parseInt(hex.slice(1), 16);
  return `rgba(${(n >> 16) & 255}, ${(n >> 8) & 255}, ${n & 255}, ${alpha})`;
}
