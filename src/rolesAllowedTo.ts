import { PERMISSIONS, ROLE_LABELS, type LabAction } from '@shared/auth/permissions'

const LIST = new Intl.ListFormat('en', { type: 'conjunction' })

/** The roles that may do `action`, in words for people: "Lab administrator, Principal investigator and Reviewer". */
export function rolesAllowedTo(action: LabAction): string {
  return LIST.format(PERMISSIONS[action].map((role) => ROLE_LABELS[role]))
}
