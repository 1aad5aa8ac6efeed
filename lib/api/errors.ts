/** An error the API reports to the caller as `{"error":{"code","message"}}` with `status`. */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
    this.name = 'ApiError';
  }
}

export const notFound = (what = 'Not found') => new ApiError(404, 'not_found', what);
export const forbidden = (message = 'Your role in this workspace does not allow this') =>
  new ApiError(403, 'forbidden', message);
export const unauthorized = (message = 'Sign in or send a valid bearer token') =>
  new ApiError(401, 'unauthorized', message);
export const conflict = (code: string, message: string) => new ApiError(409, code, message);
