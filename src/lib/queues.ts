/**
 * "Waiting for me": the queues each role works from (5/10), as GET /api/v1/queues answers them
 * and the home page shows them. `at` is an ISO time, shown in site time.
 */
export type QueueLink =
	| { route: '/(app)/people/[id=uuid]'; id: string }
	| { route: '/(app)/deviations/[id=uuid]'; id: string }
	| { route: '/(app)/work/[id=uuid]'; id: string }
	| { route: '/(app)/work/[id=uuid]/steps/[key=stepkey]'; id: string; key: string };

export type QueueItem = {
	id: string;
	title: string;
	detail: string;
	at?: string;
	href?: QueueLink;
};
export type Queue = { key: string; title: string; empty: string; items: QueueItem[] };
