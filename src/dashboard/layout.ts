/**
 * Where each panel goes for a terminal size. The n–V plane takes the left side; margins, readouts and the link
 * stack on the right; the alert banner spans the top and the keys and the advisory line the bottom. Pure.
 */
export interface Rect {
  left: number;
  top: number;
  width: number;
  height: number;
}

export interface DashboardLayout {
  cols: number;
  rows: number;
  /** Below the 80×24 minimum: only the banner and a note to enlarge the terminal are shown. */
  tooSmall: boolean;
  banner: Rect;
  plot: Rect;
  events: Rect;
  margins: Rect;
  readouts: Rect;
  link: Rect;
  /** The test point panel (between the plot and the exceedances), 0 rows high without a card. */
  card: Rect;
  keys: Rect;
  caution: Rect;
  help: Rect;
}

export const MIN_COLS = 80;
export const MIN_ROWS = 24;

// 3 load-factor limits × 2 lines + the speed limit + the assumed inputs + border; on short screens the last two
// share one line.
const MARGINS_HEIGHT = 10;
const MARGINS_HEIGHT_SHORT = 9;

function clamp(value: number, lo: number, hi: number): number {
  return Math.min(hi, Math.max(lo, value));
}

export interface LayoutOptions {
  /** A test card is followed: room for its panel. */
  card?: boolean;
}

/** The test point panel: 2 lines inside the border on short screens, 3 from 30 middle rows on. */
const CARD_HEIGHT = 4;
const CARD_HEIGHT_TALL = 5;

export function computeLayout(cols: number, rows: number, options: LayoutOptions = {}): DashboardLayout {
  const c = Math.max(1, Math.floor(cols));
  const r = Math.max(1, Math.floor(rows));
  const tooSmall = c < MIN_COLS || r < MIN_ROWS;
  const bannerHeight = r >= 32 ? 3 : 1;
  const middleTop = bannerHeight;
  const middleHeight = Math.max(0, r - bannerHeight - 2);
  const rightWidth = clamp(Math.round(c * 0.42), 36, 52);
  const leftWidth = Math.max(0, c - rightWidth);
  const eventsHeight = clamp(Math.round(middleHeight * 0.3), 6, 12);
  const marginsHeight = middleHeight >= 23 ? MARGINS_HEIGHT : MARGINS_HEIGHT_SHORT;
  // The readouts hold the energy lines too; on the 80×24 screen the link panel gives up a line for them.
  const readoutsHeight = middleHeight >= 30 ? 13 : 8;
  const linkHeight = Math.max(0, middleHeight - marginsHeight - readoutsHeight);
  const cardHeight = options.card ? (middleHeight >= 30 ? CARD_HEIGHT_TALL : CARD_HEIGHT) : 0;
  const plotHeight = Math.max(0, middleHeight - eventsHeight - cardHeight);
  const helpWidth = Math.min(c, 66);
  const helpHeight = Math.min(r, 22);
  return {
    cols: c,
    rows: r,
    tooSmall,
    banner: { left: 0, top: 0, width: c, height: bannerHeight },
    plot: { left: 0, top: middleTop, width: leftWidth, height: plotHeight },
    card: { left: 0, top: middleTop + plotHeight, width: leftWidth, height: cardHeight },
    events: { left: 0, top: middleTop + middleHeight - eventsHeight, width: leftWidth, height: eventsHeight },
    margins: { left: leftWidth, top: middleTop, width: rightWidth, height: marginsHeight },
    readouts: { left: leftWidth, top: middleTop + marginsHeight, width: rightWidth, height: readoutsHeight },
    link: { left: leftWidth, top: middleTop + marginsHeight + readoutsHeight, width: rightWidth, height: linkHeight },
    keys: { left: 0, top: r - 2, width: c, height: 1 },
    caution: { left: 0, top: r - 1, width: c, height: 1 },
    help: {
      left: Math.max(0, Math.floor((c - helpWidth) / 2)),
      top: Math.max(0, Math.floor((r - helpHeight) / 2)),
      width: helpWidth,
      height: helpHeight,
    },
  };
}

/** Inner size of a bordered panel. */
export function innerSize(rect: Rect): { width: number; height: number } {
  return { width: Math.max(0, rect.width - 2), height: Math.max(0, rect.height - 2) };
}
