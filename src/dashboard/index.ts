/**
 * The terminal dashboard (blessed + blessed-contrib). This module only draws: every text and every pixel comes
 * from the pure screen and plot models. Records are only stored on arrival; a timer redraws at most 20 times a
 * second, so the data rate never drives the screen. The shell's clock decides staleness.
 */
import blessed from 'blessed';
import contrib from 'blessed-contrib';
import type { Aircraft } from '../core/aircraft.js';
import { isaPressurePa } from '../core/atmosphere.js';
import { vneTasMps } from '../core/performance.js';
import type { LimitEvent } from '../core/events.js';
import type { MarginRecord } from '../core/margin-record.js';
import type { AlertThresholds } from '../core/thresholds.js';
import type { LinkHealth } from '../sources/link-health.js';
import { newWarnings } from './format-alert.js';
import { colorAllowed, renderLine, renderLines, type Line, type Tone } from './format-tags.js';
import { nextSpeedUnit, type SpeedUnit } from './format-units.js';
import { computeLayout, type DashboardLayout, type Rect } from './layout.js';
import { buildPlotModel, isMaterialChange, type EnvelopeConditions } from './plot-model.js';
import { rasterizePolyline } from './raster.js';
import { buildScreenModel, type Panel, type ReplayStatus, type ScreenInput } from './screen-model.js';
import { createTrail } from './trail.js';
import type { LiveCard } from './live-card.js';

export interface DashboardOptions {
  aircraft: Aircraft;
  thresholds: AlertThresholds;
  /** Shown in the link panel's title, e.g. "serial /dev/ttyUSB0 @ 57600". */
  sourceLabel: string;
  /** Present for a replay: the transport keys apply. */
  replay?: { lengthS: number };
  /** A test card followed live (the caller feeds it records and breaks); n and p step through its points. */
  card?: LiveCard;
  /** Notes kept at the top of the event log (e.g. a card made for another airframe). */
  notices?: readonly string[];
}

export interface DashboardControls {
  /** q or Ctrl-C: the caller flushes, destroys the dashboard and exits 0. */
  quit(): void;
  togglePause?(): void;
  /** ×2 or ÷2 (factor 2 or 0.5). */
  changeSpeed?(factor: number): void;
  seekBy?(deltaS: number): void;
}

export interface Dashboard {
  pushRecord(rec: MarginRecord): void;
  pushEvent(ev: LimitEvent): void;
  /** Replace the exceedance list (after a replay sought back: the events of the data up to the target). */
  resetEvents(events: readonly LimitEvent[]): void;
  setLink(h: LinkHealth): void;
  setReplay(s: ReplayStatus): void;
  showError(message: string): void;
  /** Restores the terminal. Safe to call more than once. */
  destroy(): void;
}

/** Redraw period of the timer, ms (10 per second). */
const RENDER_PERIOD_MS = 100;
/** Least time between two redraws, ms: at most 20 per second even with keys pressed. */
const MIN_RENDER_GAP_MS = 50;
const MAX_EVENTS = 500;

/** The canvas's drawing surface (blessed-contrib's d.ts does not declare it). */
interface BrailleSurface {
  width: number;
  height: number;
  content: Buffer;
  colors: unknown[];
  chars: unknown[];
  color: string | number;
  fontFg: string | number;
  fontBg: string | number;
  set(x: number, y: number): void;
  writeText(text: string, x: number, y: number): void;
}

/** Canvas colours: names of the 8 basic colours, or a 256-colour index (blessed maps it down on smaller terminals). */
const CANVAS_COLOR: Record<Tone, string | number> = {
  plain: 'white',
  dim: 244,
  heading: 'white',
  ok: 'green',
  caution: 'yellow',
  warning: 'red',
  stale: 'magenta',
  key: 'cyan',
  'banner-normal': 'green',
  'banner-caution': 'yellow',
  'banner-warning': 'red',
  'banner-stale': 'magenta',
  'banner-idle': 'white',
};

const BORDER_COLOR: Partial<Record<Tone, string>> = { caution: 'yellow', warning: 'red', stale: 'magenta' };

function place(el: blessed.Widgets.BlessedElement, r: Rect): void {
  el.left = r.left;
  el.top = r.top;
  el.width = Math.max(1, r.width);
  el.height = Math.max(1, r.height);
}

export function startDashboard(options: DashboardOptions, controls: DashboardControls): Dashboard {
  const color = colorAllowed(process.env);
  const isReplay = options.replay !== undefined;
  const screen = blessed.screen({
    smartCSR: true,
    fullUnicode: true,
    forceUnicode: true,
    autoPadding: false,
    warnings: false,
    title: 'turnmargin',
  });
  // terminfo's max_colors: on 8-colour terminals grey becomes black, so dim tones are drawn differently.
  const colors = (screen as unknown as { tput?: { colors?: number } }).tput?.colors ?? 256;

  const panel = (): blessed.Widgets.BoxElement =>
    blessed.box({ tags: true, border: { type: 'line' }, style: { border: {} }, wrap: false });
  const banner = blessed.box({ tags: true, wrap: false });
  const margins = panel();
  const readouts = panel();
  const link = panel();
  const events = panel();
  const cardPanel = panel();
  const keys = blessed.box({ tags: true, wrap: false });
  const caution = blessed.box({ tags: true, wrap: false });
  const tooSmall = blessed.box({ tags: true, wrap: false, hidden: true });
  const help = blessed.box({
    tags: true,
    border: { type: 'line' },
    label: ' All keys ',
    hidden: true,
    style: { border: {} },
  });
  const plot = contrib.canvas({
    border: { type: 'line' },
    label: ' n–V plane ',
    style: { border: {} },
    wrap: false,
  } as contrib.Widgets.CanvasOptions);
  // Draw inside the border: blessed-contrib sizes its canvas as if there were none.
  (plot as unknown as { calcSize(): void }).calcSize = function (
    this: blessed.Widgets.BoxElement & { canvasSize: { width: number; height: number } },
  ) {
    this.canvasSize = {
      width: Math.max(2, (Number(this.width) - 2) * 2),
      height: Math.max(4, (Number(this.height) - 2) * 4),
    };
  };
  for (const el of [banner, plot, events, cardPanel, margins, readouts, link, keys, caution, tooSmall, help])
    screen.append(el);
  const layoutOptions = { card: options.card !== undefined };

  const trail = createTrail();
  const eventsByKey = new Map<string, LimitEvent>();
  let record: MarginRecord | null = null;
  let sawSimulated = false;
  let lastRecordAtMs: number | null = null;
  let linkHealth: LinkHealth | null = null;
  let replay: ReplayStatus | null = null; // until the caller's first setReplay
  let units: SpeedUnit = 'mps';
  let muted = false;
  let helpVisible = false;
  let error: string | null = null;
  let bellPending = false;
  let drawn: EnvelopeConditions | null = null;
  let layout: DashboardLayout = computeLayout(Number(screen.width), Number(screen.height), layoutOptions);
  let lastRenderMs = 0;
  let pendingRender: NodeJS.Timeout | null = null;
  let destroyed = false;

  const applyLayout = (): void => {
    layout = computeLayout(Number(screen.width), Number(screen.height), layoutOptions);
    place(banner, layout.banner);
    place(plot, layout.plot);
    place(cardPanel, layout.card);
    place(events, layout.events);
    place(margins, layout.margins);
    place(readouts, layout.readouts);
    place(link, layout.link);
    place(keys, layout.keys);
    place(caution, layout.caution);
    place(help, layout.help);
    place(tooSmall, {
      left: 0,
      top: layout.banner.height,
      width: layout.cols,
      height: Math.max(1, layout.rows - layout.banner.height),
    });
    for (const el of [plot, events, margins, readouts, link, keys, caution]) {
      if (layout.tooSmall) el.hide();
      else el.show();
    }
    if (layout.tooSmall || layout.card.height === 0) cardPanel.hide();
    else cardPanel.show();
    if (layout.tooSmall) tooSmall.show();
    else tooSmall.hide();
    // Rebuild the braille surface at the new size.
    plot.emit('attach');
  };

  const setPanel = (el: blessed.Widgets.BoxElement, p: Panel): void => {
    el.setLabel(` ${p.title} `);
    const style = el.style as { border: { fg?: string } };
    style.border.fg = color ? BORDER_COLOR[p.tone] : undefined;
    el.setContent(renderLines(p.lines, { color, colors }));
  };

  const drawPlot = (input: ScreenInput, stale: boolean): void => {
    const ctx = (plot as unknown as { ctx?: { _canvas: BrailleSurface } }).ctx;
    if (!ctx) return;
    const surface = ctx._canvas;
    surface.content.fill(0);
    surface.colors = new Array(surface.colors.length);
    surface.chars = new Array(surface.chars.length);
    if (record !== null) {
      const now = {
        densityKgM3: record.density_kg_m3,
        massKg: record.mass_kg,
        vneTasMps: vneTasMps(options.aircraft, isaPressurePa(record.alt_m), record.temperature_k),
      };
      if (isMaterialChange(drawn, now)) drawn = now;
    }
    const model = buildPlotModel({
      aircraft: options.aircraft,
      thresholds: options.thresholds,
      conditions: drawn ?? { densityKgM3: 1.225, massKg: options.aircraft.massKg },
      trail: trail.points(),
      nowTS: record?.t_s ?? null,
      current: record
        ? {
            tasMps: record.tas_mps,
            n: record.n_measured,
            level: record.flying ? record.level : 'normal',
            sustainedBandMps: record.sustained_band_mps,
          }
        : null,
      target: input.card
        ? { tasMps: input.card.point.tas_mps, n: input.card.point.load_factor, id: input.card.point.id }
        : null,
      stale,
      units: input.units,
      cols: surface.width / 2,
      rows: surface.height / 4,
    });
    const paint = (tone: Tone): string | number =>
      !color ? 'normal' : tone === 'dim' && colors <= 8 ? 'white' : CANVAS_COLOR[tone];
    for (const line of model.polylines) {
      surface.color = paint(line.tone);
      for (const [x, y] of rasterizePolyline(line.points, line.dotEvery)) surface.set(x, y);
    }
    if (model.marker) {
      surface.color = paint(model.marker.tone);
      for (let dx = -1; dx <= 1; dx++)
        for (let dy = -2; dy <= 2; dy++) surface.set(model.marker.x + dx, model.marker.y + dy);
    }
    const cols = surface.width / 2;
    for (const t of model.texts) {
      if (t.row < 0 || t.row >= surface.height / 4 || t.col >= cols) continue;
      const text = Array.from(t.text)
        .slice(0, cols - Math.max(0, t.col))
        .join('');
      if (!text) continue;
      surface.fontFg = paint(t.tone);
      surface.writeText(text, Math.max(0, t.col) * 2, t.row * 4);
    }
  };

  const render = (): void => {
    if (destroyed) return;
    lastRenderMs = performance.now();
    if (pendingRender) {
      clearTimeout(pendingRender);
      pendingRender = null;
    }
    const input: ScreenInput = {
      aircraftName: options.aircraft.name,
      thresholds: options.thresholds,
      sourceLabel: options.sourceLabel,
      record,
      events: [...eventsByKey.values()],
      link: linkHealth,
      replay,
      isReplay,
      ageS: lastRecordAtMs === null ? null : (performance.now() - lastRecordAtMs) / 1000,
      units,
      muted,
      error,
      // Once a frame said it was simulated, the whole session is marked (a simulator never stops saying it).
      simulated: sawSimulated,
      card: options.card?.view() ?? null,
      notices: options.notices ?? [],
    };
    const model = buildScreenModel(input, layout);
    banner.setContent(renderLines(model.banner, { color, colors }));
    if (model.tooSmall) {
      tooSmall.setContent(renderLines(model.tooSmall, { color, colors }));
    } else {
      setPanel(margins, model.margins);
      setPanel(readouts, model.readouts);
      setPanel(link, model.link);
      setPanel(events, model.events);
      if (model.card) setPanel(cardPanel, model.card);
      plot.setLabel(` ${model.plotTitle} `);
      const plotStyle = plot.style as { border: { fg?: string } };
      plotStyle.border.fg = color && model.stale ? BORDER_COLOR.stale : undefined;
      drawPlot(input, model.stale);
      keys.setContent(renderLine(model.keys, { color, colors }));
      caution.setContent(renderLine(model.caution, { color, colors }));
    }
    if (helpVisible) {
      help.setContent(renderLines(model.help as Line[], { color, colors }));
      help.show();
      help.setFront();
    } else {
      help.hide();
    }
    if (bellPending && !muted) screen.program.bell();
    bellPending = false;
    screen.render();
  };

  /** Redraw soon, but never sooner than MIN_RENDER_GAP_MS after the last redraw. */
  const requestRender = (): void => {
    if (destroyed || pendingRender) return;
    const wait = Math.max(0, lastRenderMs + MIN_RENDER_GAP_MS - performance.now());
    pendingRender = setTimeout(render, wait);
  };

  const onKey = (ch: string | undefined, key: { name?: string; full?: string; ctrl?: boolean } | undefined): void => {
    const name = key?.name;
    if (ch === 'q' || (key?.ctrl && name === 'c')) {
      controls.quit();
      return;
    }
    if (ch === '?') helpVisible = !helpVisible;
    else if (name === 'escape') helpVisible = false;
    else if (name === 'space' || ch === ' ') controls.togglePause?.();
    else if (ch === '+' || ch === '=') controls.changeSpeed?.(2);
    else if (ch === '-' || ch === '_' || ch === '−') controls.changeSpeed?.(0.5);
    else if (name === 'left') controls.seekBy?.(-10);
    else if (name === 'right') controls.seekBy?.(10);
    else if (ch === 'm') muted = !muted;
    else if (ch === 'u') units = nextSpeedUnit(units);
    else if (ch === 'c') trail.clear();
    else if (ch === 'n' && options.card) options.card.step(1);
    else if (ch === 'p' && options.card) options.card.step(-1);
    else return;
    requestRender();
  };
  screen.on('keypress', onKey);
  screen.on('resize', () => {
    applyLayout();
    render();
  });

  const timer = setInterval(render, RENDER_PERIOD_MS);

  function destroy(): void {
    if (destroyed) return;
    destroyed = true;
    clearInterval(timer);
    if (pendingRender) clearTimeout(pendingRender);
    screen.destroy();
  }

  applyLayout();
  render();

  return {
    pushRecord(rec) {
      // Only records with a warning can start one (keeps the 1 kHz path cheap).
      if (rec.level === 'warning' && newWarnings(record?.alerts ?? [], rec.alerts).length > 0) bellPending = true;
      if (record !== null && rec.t_s < record.t_s) drawn = null;
      record = rec;
      if (rec.simulated === true) sawSimulated = true;
      lastRecordAtMs = performance.now();
      trail.push({ tS: rec.t_s, tasMps: rec.tas_mps, n: rec.n_measured });
    },
    pushEvent(ev) {
      // Kept by reference: the event tracker updates an open event in place (end, duration, peak), so the log
      // shows it growing without a push per frame.
      eventsByKey.set(`${ev.limit}:${ev.level}:${ev.start_s}`, ev);
      if (eventsByKey.size > MAX_EVENTS) eventsByKey.delete(eventsByKey.keys().next().value!);
    },
    resetEvents(list) {
      eventsByKey.clear();
      for (const ev of list.slice(-MAX_EVENTS)) eventsByKey.set(`${ev.limit}:${ev.level}:${ev.start_s}`, ev);
      requestRender();
    },
    setLink(h) {
      linkHealth = h;
    },
    setReplay(s) {
      replay = { ...s };
    },
    showError(message) {
      error = message;
      requestRender();
    },
    destroy,
  };
}
