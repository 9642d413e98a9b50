/**
 * The recording format ("turnmargin recording, version 1"): plain text, one received line per record, so that it
 * can be read, grepped and replayed.
 *
 *   #turnmargin-recording 1
 *   #source serial /dev/ttyUSB0 @ 57600
 *   #started 2026-05-04T10:12:00.000Z
 *   1777889520123<TAB>{"t_s":0.00,"tas_mps":21.5,"alt_m":120,"bank_deg":0}
 *   1777889520131~<TAB><the first 65536 bytes of a runaway line>
 *   #link 1777889520900 lost port disappeared
 *   #link 1777889521400 open
 *   #not-recorded 1777889530000 1985 lines (disk full)
 *
 * - A record is the receive time (integer ms since the Unix epoch), an optional "~" when the line was cut at the
 *   length cap, a TAB, then the line's bytes exactly as received (CR, noise and invalid UTF-8 included) and LF.
 * - Lines starting with "#" are metadata: the header, the source, and link events ("#link <ms> <state> [detail]").
 *   Received lines always start a record with a digit, so they never collide with metadata.
 * - "#link … open" after an earlier one marks a reconnect: a reader restarts the time check there, as the live
 *   monitor did.
 * - "#not-recorded <ms> <N> lines (<why>)" stands where N received lines could not be written (the disk refused
 *   them); readers skip it like any other metadata.
 */
export const RECORDING_MAGIC = '#turnmargin-recording 1';

const TAB = 0x09;

export function encodeHeader(sourceLabel: string, startedAtMs: number): Buffer {
  const oneLine = sourceLabel.replace(/[\r\n]+/g, ' ');
  return Buffer.from(
    `${RECORDING_MAGIC}\n#source ${oneLine}\n#started ${new Date(startedAtMs).toISOString()}\n`,
    'utf8',
  );
}

export function encodeLine(receivedAtMs: number, bytes: Buffer, cut: boolean): Buffer {
  const prefix = Buffer.from(`${Math.round(receivedAtMs)}${cut ? '~' : ''}\t`, 'latin1');
  return Buffer.concat([prefix, bytes, Buffer.from('\n')], prefix.length + bytes.length + 1);
}

export function encodeLinkEvent(atMs: number, state: string, detail?: string): Buffer {
  const tail = detail ? ` ${detail.replace(/[\r\n]+/g, ' ')}` : '';
  return Buffer.from(`#link ${Math.round(atMs)} ${state}${tail}\n`, 'utf8');
}

export function encodeNotRecorded(atMs: number, lines: number, why: string): Buffer {
  return Buffer.from(`#not-recorded ${Math.round(atMs)} ${lines} lines (${why.replace(/[\r\n]+/g, ' ')})\n`, 'utf8');
}

export type RecordingEntry =
  | { kind: 'line'; receivedAtMs: number; bytes: Buffer; cut: boolean }
  | { kind: 'link'; atMs: number; state: string; detail: string }
  | { kind: 'meta'; text: string }
  | { kind: 'bad'; reason: string };

/** Decode one record (the bytes of one line of a recording file, LF removed). */
export function decodeEntry(record: Buffer): RecordingEntry {
  if (record[0] === 0x23 /* # */) {
    const text = record.toString('utf8').replace(/\r$/, '');
    const link = /^#link (\d+) (\S+) ?(.*)$/.exec(text);
    if (link) return { kind: 'link', atMs: Number(link[1]), state: link[2]!, detail: link[3] ?? '' };
    return { kind: 'meta', text };
  }
  const tab = record.indexOf(TAB);
  const head = tab < 0 ? '' : record.subarray(0, tab).toString('latin1');
  const match = /^(\d+)(~?)$/.exec(head);
  if (!match) return { kind: 'bad', reason: 'not a recording record (expected receive time, TAB, line)' };
  return { kind: 'line', receivedAtMs: Number(match[1]), bytes: record.subarray(tab + 1), cut: match[2] === '~' };
}
