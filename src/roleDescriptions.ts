import type { LabRole } from '@shared/auth/permissions'

/**
 * What each role may do, in plain words for the person choosing or receiving it (the invitation dialog and the page
 * that accepts an invitation). Follows the permissions table in shared/auth/permissions.ts.
 */
export const ROLE_DESCRIPTIONS: Record<LabRole, string> = {
  admin: 'Runs the lab in Remanence: invites people, changes roles and deactivates members, and can do everything a principal investigator can.',
  pi: 'Leads the work: creates projects, assigns images, reviews and approves analyses, compares and exports results, and manages the lab’s members.',
  microscopist: 'Uploads images and stacks, records samples and their anneal conditions, assigns frames and runs analyses. Does not approve.',
  annotator: 'Segments the frames assigned to them, corrects the masks and submits the analyses for review.',
  reviewer: 'Checks submitted analyses: comments, approves or asks for changes, and compares and exports approved results.',
}
