/**
 * The chart colours (the page's own live in style.css). Ink on warm paper for
 * contrast on a projector in a lit room; each fitted order has its own dash pattern
 * as well as its colour, so the curves stay apart in grey print and for readers who
 * do not tell the hues apart.
 */
export const PALETTE = Object.freeze({
  ink: '#1c2530',
  pale: '#b4bcc6',
  grid: '#e2ddd2',
  veil: 'rgba(110, 96, 70, 0.12)',
  zero: '#a86b00',
  first: '#0b6e74',
  second: '#7b3a9e',
  nth: '#505a64',
  outlier: '#c0281b',
  residual: '#36475a',
  mark: '#6a4f1f',
});
