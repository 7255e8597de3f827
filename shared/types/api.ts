/** The error body every failing API call returns. `code` is kebab-case and stable; `message` is for people. */
export interface ApiErrorBody {
  error: {
    code: string
    message: string
    /** The uploaded file the error is about, when there is one. */
    file?: string
    /** Field-level messages for forms. */
    fields?: Record<string, string[]>
  }
}

export interface HealthReport {
  ok: boolean
  db: 'up' | 'down'
  storage: 'up' | 'down'
  mail: 'up' | 'down'
}

export interface Page<T> {
  items: T[]
  total: number
  page: number
  pageSize: number
}
