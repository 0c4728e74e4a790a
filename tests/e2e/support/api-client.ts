/**
 * The API as a browser test's set-up uses it: JSON requests against the test server, the demo accounts by role,
 * and an access token from the real sign-in route.
 */
import { DEMO_ACCOUNTS } from './server';

export interface DemoAccount {
  email: string;
  name: string;
  password: string;
}

export function demoAccount(role: string): DemoAccount {
  const found = DEMO_ACCOUNTS.find((a) => a.role === role);
  if (!found) throw new Error(`no demo ${role}`);
  return found;
}

export interface ApiClient {
  api<T>(path: string, init?: { token?: string; method?: string; body?: unknown }): Promise<{ status: number; body: T }>;
  tokenOf(role: string): Promise<string>;
}

/** `baseUrl` is read on each call, so a client can be made before the server has started. */
export function apiClient(baseUrl: () => string): ApiClient {
  async function api<T>(path: string, init: { token?: string; method?: string; body?: unknown } = {}): Promise<{ status: number; body: T }> {
    const response = await fetch(`${baseUrl()}${path}`, {
      method: init.method ?? (init.body === undefined ? 'GET' : 'POST'),
      headers: {
        ...(init.body === undefined ? {} : { 'Content-Type': 'application/json' }),
        ...(init.token ? { Authorization: `Bearer ${init.token}` } : {}),
      },
      body: init.body === undefined ? undefined : JSON.stringify(init.body),
    });
    const text = await response.text();
    return { status: response.status, body: (text ? JSON.parse(text) : null) as T };
  }
  async function tokenOf(role: string): Promise<string> {
    const { email, password } = demoAccount(role);
    const { body } = await api<{ token: string }>('/api/auth/sign-in', { body: { email, password } });
    return body.token;
  }
  return { api, tokenOf };
}
