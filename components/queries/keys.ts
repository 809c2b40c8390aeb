/** Query keys for every resource: invalidate by the broadest key that covers the change. */
export const keys = {
  me: ['auth', 'me'] as const,
  users: {
    all: ['users'] as const,
    list: () => ['users', 'list'] as const,
  },
};

/** How long a fetched answer counts as fresh. Named so nobody scatters magic numbers. */
export const STALE = {
  /** Who is signed in barely changes during a session. */
  session: 5 * 60_000,
  /** Admin lists: fresh enough for a minute, refetched on focus after that. */
  adminList: 60_000,
  /** Live floor data should use a refetch interval or a stream instead. */
  live: 0,
} as const;
