/**
 * File source: the raw lines of a telemetry file (NDJSON, CSV log or turnmargin recording), with their 1-based
 * line numbers, read in bounded memory one chunk's worth at a time. It never judges a line: the replay stage
 * (src/engine/replay.ts) decodes them, then paces the frames by their t_s.
 */
import { physicalBatches, type PhysicalLine } from '../decode/read-frames.js';

export type FileRawLine = PhysicalLine;

export interface FileLineSource {
  readonly path: string;
  /** The file's lines from its start, a chunk's worth at a time; each call reads the file again. */
  batches(): AsyncGenerator<FileRawLine[]>;
}

export function createFileLineSource(path: string): FileLineSource {
  return {
    path,
    batches: () => physicalBatches(path, {}),
  };
}
