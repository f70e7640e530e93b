// RFC 9457 problem details: the one way an /api/v1 route answers with an error.
export interface ProblemFieldError {
	/** JSON Pointer (RFC 6901) to the offending member, e.g. `/scopes/1`, or a query parameter `#/query/fy`. */
	pointer: string;
	detail: string;
}

export interface ProblemInit {
	status: number;
	/** A short slug; becomes the problem type URI `urn:runnel:problem:<slug>`. */
	type?: string;
	title?: string;
	detail?: string;
	errors?: ProblemFieldError[];
	headers?: Record<string, string>;
	/** Extension members (RFC 9457 §3.2). */
	extra?: Record<string, unknown>;
}

export const STATUS_TITLES: Record<number, string> = {
	400: 'Bad request',
	401: 'Authentication required',
	403: 'Forbidden',
	404: 'Not found',
	405: 'Method not allowed',
	406: 'Not acceptable',
	409: 'Conflict',
	413: 'Content too large',
	415: 'Unsupported media type',
	422: 'Unprocessable content',
	428: 'Precondition required',
	429: 'Too many requests',
	500: 'Internal server error',
	503: 'Service unavailable'
};

/** Thrown by server code to answer with a problem; hooks.server.ts turns it into the response. */
export class ApiError extends Error {
	readonly init: ProblemInit;
	constructor(init: ProblemInit) {
		super(init.detail ?? init.title ?? STATUS_TITLES[init.status] ?? 'Error');
		this.init = init;
	}
}

export function problemBody(init: ProblemInit, requestId?: string): Record<string, unknown> {
	return {
		type: init.type ? `urn:runnel:problem:${init.type}` : 'about:blank',
		status: init.status,
		title: init.title ?? STATUS_TITLES[init.status] ?? 'Error',
		...(init.detail ? { detail: init.detail } : {}),
		...(requestId ? { instance: `urn:uuid:${requestId}` } : {}),
		...(init.errors && init.errors.length > 0 ? { errors: init.errors } : {}),
		...init.extra
	};
}

export function problemResponse(init: ProblemInit, requestId?: string): Response {
	return new Response(JSON.stringify(problemBody(init, requestId)), {
		status: init.status,
		headers: { 'content-type': 'application/problem+json', ...init.headers }
	});
}

export const PROBLEM_CONTENT_TYPE = 'application/problem+json';
