/**
 * A minimal server-sent-events reader for node (which has no EventSource): reads the wire format
 * (lines `data: …` ended by a blank line, `:` comments ignored) as the HTML standard defines it.
 */
import { get, type ClientRequest } from 'node:http';

export function nodeEventSource(url: string, headers: Record<string, string> = {}) {
  const source: { onmessage: ((e: { data: string }) => void) | null; close(): void } = {
    onmessage: null,
    close: () => req.destroy(),
  };
  const req: ClientRequest = get(url, { headers }, (res) => {
    if (res.statusCode !== 200) throw new Error(`event stream answered ${res.statusCode}`);
    res.setEncoding('utf8');
    let buffer = '';
    res.on('data', (chunk: string) => {
      buffer += chunk;
      let end: number;
      while ((end = buffer.indexOf('\n\n')) >= 0) {
        const block = buffer.slice(0, end);
        buffer = buffer.slice(end + 2);
        const data = block
          .split('\n')
          .filter((l) => l.startsWith('data:'))
          .map((l) => l.slice(5).replace(/^ /, ''))
          .join('\n');
        if (data && source.onmessage) source.onmessage({ data });
      }
    });
  });
  req.on('error', () => undefined);
  return source;
}
