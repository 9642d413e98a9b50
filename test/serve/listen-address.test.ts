import { describe, expect, it } from 'vitest';
import { formatWsUrl, isLoopbackHost, parseListenAddress } from '../../src/serve/listen-address.js';

describe('listen addresses', () => {
  it('reads HOST:PORT, [IPv6]:PORT and :PORT (host defaulting to loopback)', () => {
    expect(parseListenAddress('127.0.0.1:8765')).toEqual({ ok: true, value: { host: '127.0.0.1', port: 8765 } });
    expect(parseListenAddress('[::1]:0')).toEqual({ ok: true, value: { host: '::1', port: 0 } });
    expect(parseListenAddress(':9000')).toEqual({ ok: true, value: { host: '127.0.0.1', port: 9000 } });
    expect(parseListenAddress('localhost:1')).toEqual({ ok: true, value: { host: 'localhost', port: 1 } });
  });

  it('names what is wrong with a bad address', () => {
    expect(parseListenAddress('8765')).toEqual({
      ok: false,
      reason: 'must be HOST:PORT, e.g. 127.0.0.1:8765 (got "8765")',
    });
    expect(parseListenAddress('127.0.0.1:70000')).toEqual({
      ok: false,
      reason: 'port must be from 0 to 65535 (got 70000)',
    });
    expect(parseListenAddress('::1:80').ok).toBe(false);
  });

  it('tells loopback hosts from network ones (127.0.0.0/8 and ::1 are loopback, RFC 1122 / RFC 4291)', () => {
    for (const h of ['127.0.0.1', '127.1.2.3', '::1', 'localhost', 'LOCALHOST'])
      expect(isLoopbackHost(h), h).toBe(true);
    for (const h of ['0.0.0.0', '::', '192.168.1.10', '10.0.0.1', 'example.org'])
      expect(isLoopbackHost(h), h).toBe(false);
  });

  it('writes IPv6 hosts in brackets in the URL', () => {
    expect(formatWsUrl('::1', 8765)).toBe('ws://[::1]:8765');
    expect(formatWsUrl('127.0.0.1', 8765)).toBe('ws://127.0.0.1:8765');
  });
});
