import { DEMO_PASSWORD } from '../../server/db/seed';

export interface Answer<T = unknown> {
  status: number;
  body: T;
  headers: Headers;
}

/** A signed-in (or anonymous) API client with its own cookie jar and CSRF token, like a browser tab. */
export class ApiClient {
  private cookies = new Map<string, string>();
  csrfToken: string | null = null;

  /** With a token, every request carries it as "Authorization: Bearer" and no CSRF token, like a script. */
  constructor(
    readonly baseUrl: string,
    readonly token: string | null = null,
  ) {}

  private cookieHeader() {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
  }

  private keepCookies(res: Response) {
    for (const line of res.headers.getSetCookie()) {
      const [pair] = line.split(';');
      const eq = pair!.indexOf('=');
      const name = pair!.slice(0, eq).trim();
      const value = pair!.slice(eq + 1).trim();
      if (/expires=Thu, 01 Jan 1970/i.test(line) || value === '') this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
  }

  async raw(method: string, path: string, body?: unknown, opts: { csrf?: boolean; headers?: Record<string, string> } = {}): Promise<Response> {
    const headers: Record<string, string> = { ...opts.headers };
    if (this.token) headers.authorization = `Bearer ${this.token}`;
    if (this.cookies.size) headers.cookie = this.cookieHeader();
    let payload: FormData | string | undefined;
    if (body instanceof FormData) payload = body;
    else if (body !== undefined) {
      headers['content-type'] = 'application/json';
      payload = JSON.stringify(body);
    }
    if (method !== 'GET' && opts.csrf !== false && !this.token) {
      if (!this.csrfToken) await this.refreshCsrf();
      headers['x-csrf-token'] = this.csrfToken!;
      if (this.cookies.size) headers.cookie = this.cookieHeader();
    }
    const res = await fetch(this.baseUrl + path, { method, headers, body: payload, redirect: 'manual' });
    this.keepCookies(res);
    return res;
  }

  async call<T = unknown>(method: string, path: string, body?: unknown, opts: { csrf?: boolean } = {}): Promise<Answer<T>> {
    const res = await this.raw(method, path, body, opts);
    const text = await res.text();
    let parsed: unknown = text;
    try {
      parsed = text ? JSON.parse(text) : null;
    } catch {
      /* not JSON: keep the text */
    }
    return { status: res.status, body: parsed as T, headers: res.headers };
  }

  /** The same browser session talking to another server node: one cookie jar, one CSRF token. */
  at(baseUrl: string): ApiClient {
    const other = new ApiClient(baseUrl);
    other.cookies = this.cookies;
    other.csrfToken = this.csrfToken;
    return other;
  }

  async refreshCsrf() {
    const res = await this.call<{ csrfToken: string }>('GET', '/api/auth/csrf');
    this.csrfToken = res.body.csrfToken;
  }

  get = <T = unknown>(path: string) => this.call<T>('GET', path);
  post = <T = unknown>(path: string, body?: unknown) => this.call<T>('POST', path, body ?? {});
  put = <T = unknown>(path: string, body: unknown) => this.call<T>('PUT', path, body);
  patch = <T = unknown>(path: string, body: unknown) => this.call<T>('PATCH', path, body);
  del = <T = unknown>(path: string) => this.call<T>('DELETE', path);

  async login(email: string, password = DEMO_PASSWORD): Promise<Answer> {
    const res = await this.post<{ csrfToken?: string }>('/api/auth/login', { email, password });
    if (res.status === 200) this.csrfToken = res.body.csrfToken ?? null;
    return res;
  }
}

export async function signedIn(baseUrl: string, email: string, password = DEMO_PASSWORD): Promise<ApiClient> {
  const c = new ApiClient(baseUrl);
  const res = await c.login(email, password);
  if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status} ${JSON.stringify(res.body)}`);
  return c;
}
