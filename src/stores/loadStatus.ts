/** Where a store's server data stands; views show a skeleton, the data, or an error with Retry accordingly. */
export type LoadStatus = 'idle' | 'loading' | 'ready' | 'error'
