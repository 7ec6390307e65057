// api.js: the daemon's JSON API with the bearer token the user typed. Errors arrive as RFC 9457
// problem documents; they become ApiError with the daemon's own explanation (detail).

export class ApiError extends Error {
  constructor(status, title, detail) {
    super(detail || title || `HTTP ${status}`);
    this.status = status;
    this.title = title;
  }

  // 404: the route (or the thing asked for) does not exist on this daemon, or this token may
  // not see it; the API answers both alike.
  get absent() { return this.status === 404; }
  get unauthorized() { return this.status === 401; }
  get forbidden() { return this.status === 403; }
}

export class Api {
  constructor(token) {
    this.token = token;
  }

  // GET `path` (with `query` parameters) as JSON; throws ApiError.
  async get(path, query = {}) {
    return this.send('GET', path, query);
  }

  // POST `path` with a JSON `body`; throws ApiError.
  async post(path, body = {}) {
    return this.send('POST', path, {}, body);
  }

  async send(method, path, query, body) {
    const url = new URL(path, window.location.origin);
    for (const [name, value] of Object.entries(query)) url.searchParams.set(name, value);
    const headers = { Authorization: `Bearer ${this.token}`, Accept: 'application/json' };
    if (body !== undefined) headers['Content-Type'] = 'application/json';
    let response;
    try {
      response = await fetch(url, { method, headers, cache: 'no-store',
        body: body === undefined ? undefined : JSON.stringify(body) });
    } catch (error) {
      throw new ApiError(0, 'unreachable', `the daemon did not answer (${error.message})`);
    }
    const type = response.headers.get('Content-Type') || '';
    const answer = type.includes('json') ? await response.json().catch(() => null) : null;
    if (!response.ok) {
      throw new ApiError(response.status, answer?.title, answer?.detail);
    }
    if (answer === null) throw new ApiError(response.status, 'not JSON', `${path} did not answer JSON`);
    return answer;
  }
}
