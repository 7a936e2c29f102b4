import type { CliIo } from './io.js';

/**
 * The same io, with every line written to stdout or stderr beginning with the time it was written:
 * ISO 8601 in UTC (`2026-12-01T12:00:00.000Z`, Date.prototype.toISOString) from the injected
 * clock, then a space. A chunk that ends inside a line leaves the rest of that line unstamped.
 */
export function stampLines(io: CliIo): CliIo {
  const stamped = (write: (text: string) => void): ((text: string) => void) => {
    let atLineStart = true;
    return (text) => {
      if (text === '') return;
      const stamp = `${io.now().toISOString()} `;
      let out = '';
      for (const line of text.split(/(?<=\n)/)) {
        if (atLineStart) out += stamp;
        out += line;
        atLineStart = line.endsWith('\n');
      }
      write(out);
    };
  };
  return { ...io, stdout: stamped(io.stdout), stderr: stamped(io.stderr) };
}
