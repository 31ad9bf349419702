// Trace colours and line styles per channel. The hues are the Okabe–Ito palette (Okabe & Ito 2008, "Color
// Universal Design"), chosen to stay distinct under the common forms of colour-vision deficiency; the yellow is
// left out (too faint on a light page). Every channel also has its own dash pattern, so traces differ without
// colour too. The CSS holds the same values as --ch0..--ch3.
export const CHANNEL_COLOURS = ['#0072b2', '#d55e00', '#009e73', '#cc79a7', '#e69f00', '#56b4e9', '#000000', '#7f7f7f'];
const CHANNEL_DASHES: number[][] = [[], [7, 2], [2, 2], [10, 2, 2, 2]];

export function channelColour(i: number): string {
  return CHANNEL_COLOURS[i % CHANNEL_COLOURS.length];
}

/** The live-trace dash of a channel: solid for the first, then long dash, dot, dash-dot. */
export function channelDash(i: number): number[] {
  return CHANNEL_DASHES[i % CHANNEL_DASHES.length];
}

/** The same colour with alpha, for overlays. */
export function withAlpha(hex: string, alpha: number): string {
  const n = parseInt(hex.slice(1), 16);
  return `rgba(${(n >> 16) & 255}, ${(n >> 8) & 255}, ${n & 255}, ${alpha})`;
}
