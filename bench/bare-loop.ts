/**
 * The practical floor for reading a flight: split a file into lines and JSON.parse each, nothing else.
 * Run as a child process by the benchmark so its time and memory are measured the same way as `review`'s.
 */
import { createReadStream } from 'node:fs';

async function main(path: string): Promise<void> {
  let rest = '';
  let parsed = 0;
  for await (const chunk of createReadStream(path, { encoding: 'utf8', highWaterMark: 1 << 16 })) {
    const lines = (rest + (chunk as string)).split('\n');
    rest = lines.pop() ?? '';
    for (const line of lines) {
      if (line) {
        JSON.parse(line);
        parsed++;
      }
    }
  }
  if (rest) {
    JSON.parse(rest);
    parsed++;
  }
  process.stdout.write(`${parsed}\n`);
}

void main(process.argv[2] ?? '');
