// An HTTP client that connects from a chosen loopback address (127.x.y.z all reach the server on
// Linux), so tests can be different clients to the sign-in limits without `trust proxy` or headers.
import http from 'node:http';
import { randomInt } from 'node:crypto';

/** A random loopback address other than 127.0.0.1 (the other tests' address). */
export const loopbackIp = () => `127.${randomInt(1, 255)}.${randomInt(0, 256)}.${randomInt(1, 255)}`;

export interface IpReply {
  status: number;
  headers: http.IncomingHttpHeaders;
  body: any;
}

export class IpClient {
  cookie: string | null = null;
  csrfToken: string | null = null;

  constructor(
    readonly baseUrl: string,
    readonly ip: string,
  ) {}

  /** A client with a session (cookie and CSRF token), as a browser tab on that address would hold. */
  static async open(baseUrl: string, ip: string): Promise<IpClient> {
    const client = new IpClient(baseUrl, ip);
    client.csrfToken = (await client.request('GET', '/api/session')).body.csrfToken;
    return client;
  }

  signIn(email: string, password: string, headers: Record<string, string> = {}): Promise<IpReply> {
    return this.request('POST', '/api/session', { email, password }, headers);
  }

  request(method: string, path: string, body?: unknown, extra: Record<string, string> = {}): Promise<IpReply> {
    const data = body === undefined ? undefined : JSON.stringify(body);
    const headers: Record<string, string> = { ...extra };
    if (this.cookie) headers.cookie = this.cookie;
    if (data !== undefined) headers['content-type'] = 'application/json';
    if (method !== 'GET' && this.csrfToken) headers['x-csrf-token'] = this.csrfToken;
    return new Promise((resolve, reject) => {
      const req = http.request(this.baseUrl + path, { method, headers, localAddress: this.ip, agent: false }, (res) => {
        const chunks: Buffer[] = [];
        res.on('data', (c: Buffer) => chunks.push(c));
        res.on('end', () => {
          const set = (res.headers['set-cookie'] ?? []).find((c) => c.startsWith('bw.sid='));
          if (set) this.cookie = set.split(';')[0]!;
          const text = Buffer.concat(chunks).toString('utf8');
          const parsed = text && (res.headers['content-type'] ?? '').includes('json') ? JSON.parse(text) : text || null;
          if (parsed?.csrfToken) this.csrfToken = parsed.csrfToken;
          resolve({ status: res.statusCode!, headers: res.headers, body: parsed });
        });
        res.on('error', reject);
      });
      req.on('error', reject);
      req.end(data);
    });
  }
}
