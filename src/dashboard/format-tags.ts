/**
 * Styled text for the dashboard: lines are lists of segments, each with a tone that says what it means
 * (caution, warning, stale …). Only `renderLine` turns tones into blessed tags; with colour off (NO_COLOR) it uses
 * no colour at all, so every state must also be carried by the words themselves. Pure.
 */
export type Tone =
  | 'plain'
  | 'dim'
  | 'heading'
  | 'ok'
  | 'caution'
  | 'warning'
  | 'stale'
  | 'key'
  | 'banner-normal'
  | 'banner-caution'
  | 'banner-warning'
  | 'banner-stale'
  | 'banner-idle';

export interface Segment {
  text: string;
  tone: Tone;
}

export type Line = Segment[];

export function seg(text: string, tone: Tone = 'plain'): Segment {
  return { text, tone };
}

/** The visible text of a line (no styling). */
export function lineText(line: Line): string {
  return line.map((s) => s.text).join('');
}

/** Width of a line in terminal columns (one per code point; the dashboard uses no wide characters). */
export function lineWidth(line: Line): number {
  return Array.from(lineText(line)).length;
}

/** Pad a line with plain spaces, or cut it (segment by segment) to `width` columns. */
export function fitLine(line: Line, width: number): Line {
  const out: Line = [];
  let used = 0;
  for (const s of line) {
    if (used >= width) break;
    const chars = Array.from(s.text);
    const room = width - used;
    if (chars.length <= room) {
      out.push(s);
      used += chars.length;
    } else {
      out.push({ text: chars.slice(0, Math.max(0, room - 1)).join('') + '…', tone: s.tone });
      used = width;
    }
  }
  if (used < width) out.push(seg(' '.repeat(width - used)));
  return out;
}

const COLOR_TAGS: Record<Tone, [string, string]> = {
  plain: ['', ''],
  dim: ['{gray-fg}', '{/gray-fg}'],
  heading: ['{bold}', '{/bold}'],
  ok: ['{green-fg}', '{/green-fg}'],
  caution: ['{yellow-fg}{bold}', '{/bold}{/yellow-fg}'],
  warning: ['{red-fg}{bold}', '{/bold}{/red-fg}'],
  stale: ['{magenta-fg}{bold}', '{/bold}{/magenta-fg}'],
  key: ['{cyan-fg}', '{/cyan-fg}'],
  'banner-normal': ['{black-fg}{green-bg}', '{/green-bg}{/black-fg}'],
  'banner-caution': ['{black-fg}{yellow-bg}{bold}', '{/bold}{/yellow-bg}{/black-fg}'],
  'banner-warning': ['{white-fg}{red-bg}{bold}', '{/bold}{/red-bg}{/white-fg}'],
  'banner-stale': ['{white-fg}{magenta-bg}{bold}', '{/bold}{/magenta-bg}{/white-fg}'],
  'banner-idle': ['{inverse}', '{/inverse}'],
};

// 8-colour terminals have no grey: blessed reduces it to black (SGR 30), unreadable on a dark background, so dim
// text stays plain there; banners use inverse video in the banner's colour rather than black text on it.
const EIGHT_COLOR_TAGS: Record<Tone, [string, string]> = {
  ...COLOR_TAGS,
  dim: ['', ''],
  'banner-normal': ['{green-fg}{inverse}', '{/inverse}{/green-fg}'],
  'banner-caution': ['{yellow-fg}{inverse}{bold}', '{/bold}{/inverse}{/yellow-fg}'],
  'banner-warning': ['{red-fg}{inverse}{bold}', '{/bold}{/inverse}{/red-fg}'],
  'banner-stale': ['{magenta-fg}{inverse}{bold}', '{/bold}{/inverse}{/magenta-fg}'],
};

// Without colour, emphasis only: bold for anything that needs attention, inverse for the alert banner so it still
// reads as a block from across the room. The words themselves carry the state.
const MONO_TAGS: Record<Tone, [string, string]> = {
  plain: ['', ''],
  dim: ['', ''],
  heading: ['{bold}', '{/bold}'],
  ok: ['', ''],
  caution: ['{bold}', '{/bold}'],
  warning: ['{bold}', '{/bold}'],
  stale: ['{bold}', '{/bold}'],
  key: ['{bold}', '{/bold}'],
  'banner-normal': ['', ''],
  'banner-caution': ['{inverse}{bold}', '{/bold}{/inverse}'],
  'banner-warning': ['{inverse}{bold}', '{/bold}{/inverse}'],
  'banner-stale': ['{inverse}{bold}', '{/bold}{/inverse}'],
  'banner-idle': ['', ''],
};

/** Escape blessed's tag braces in literal text. */
export function escapeTags(text: string): string {
  return text.replace(/[{}]/g, (c) => (c === '{' ? '{open}' : '{close}'));
}

export interface RenderOptions {
  /** false under NO_COLOR: no colour tags at all. */
  color: boolean;
  /** Colours the terminal has (terminfo max_colors); 8 or fewer: no grey, no black text. Default 256. */
  colors?: number;
}

function tagsFor(options: RenderOptions): Record<Tone, [string, string]> {
  if (!options.color) return MONO_TAGS;
  return (options.colors ?? 256) <= 8 ? EIGHT_COLOR_TAGS : COLOR_TAGS;
}

/** One line as blessed tagged text. */
export function renderLine(line: Line, options: RenderOptions): string {
  const tags = tagsFor(options);
  return line
    .map((s) => {
      const [open, close] = tags[s.tone];
      return open + escapeTags(s.text) + close;
    })
    .join('');
}

export function renderLines(lines: readonly Line[], options: RenderOptions): string {
  return lines.map((l) => renderLine(l, options)).join('\n');
}

/** Whether colour is allowed: NO_COLOR set to any non-empty value turns it off (no-color.org). */
export function colorAllowed(env: Record<string, string | undefined>): boolean {
  const v = env['NO_COLOR'];
  return v === undefined || v === '';
}
