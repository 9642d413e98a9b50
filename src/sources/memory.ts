/** A source fed by the test (or a caller) through emit*: the memory adapter of the source interface. */
import { createLineSplitter } from '../decode/line-splitter.js';
import { systemClock, type Clock, type SourceHandlers, type SourceStatusKind, type TelemetrySource } from './source.js';

export interface MemorySource extends TelemetrySource {
  /** Bytes as a link would deliver them, in any split. */
  emitData(chunk: Buffer | string): void;
  emitStatus(kind: SourceStatusKind, detail?: string): void;
  /** Flush a partial line and report 'ended'. */
  end(): void;
}

export function createMemorySource(label = 'memory', clock: Clock = systemClock): MemorySource {
  let handlers: SourceHandlers | undefined;
  let stopped = false;
  const splitter = createLineSplitter();
  const deliver = (lines: ReturnType<typeof splitter.push>): void => {
    for (const l of lines) handlers?.onLine({ bytes: l.bytes, cut: l.cut, receivedAtMs: clock() });
  };
  return {
    label,
    start(h) {
      handlers = h;
      h.onStatus({ kind: 'open', atMs: clock() });
    },
    emitData(chunk) {
      if (!stopped) deliver(splitter.push(chunk));
    },
    emitStatus(kind, detail) {
      if (stopped) return;
      if (kind === 'lost' || kind === 'ended') deliver(splitter.end());
      handlers?.onStatus(detail === undefined ? { kind, atMs: clock() } : { kind, atMs: clock(), detail });
    },
    end() {
      this.emitStatus('ended');
    },
    async stop() {
      stopped = true;
      handlers = undefined;
    },
  };
}
