/**
 * The one permissions table of Remanence, read by the server's route guards and by the client to hide actions.
 *
 * Roles are per lab (a person can be a PI in one lab and a reviewer in another). Each action lists the roles that may
 * do it; anything not listed is denied.
 */

export const LAB_ROLES = ['admin', 'pi', 'microscopist', 'annotator', 'reviewer'] as const
export type LabRole = (typeof LAB_ROLES)[number]

/** Human labels for the roles, in our own plain words. */
export const ROLE_LABELS: Record<LabRole, string> = {
  admin: 'Lab administrator',
  pi: 'Principal investigator',
  microscopist: 'Microscopist',
  annotator: 'Annotator',
  reviewer: 'Reviewer',
}

export const PERMISSIONS = {
  /** See the lab's projects, samples, images, measurements. */
  'lab.read': ['admin', 'pi', 'microscopist', 'annotator', 'reviewer'],
  /** Invite people, change roles, deactivate members. */
  'lab.manage': ['admin', 'pi'],
  'project.create': ['admin', 'pi'],
  'project.edit': ['admin', 'pi'],
  'sample.edit': ['admin', 'pi', 'microscopist'],
  'image.upload': ['admin', 'pi', 'microscopist'],
  'image.editMetadata': ['admin', 'pi', 'microscopist'],
  'image.assign': ['admin', 'pi', 'microscopist'],
  /** Move an image the person uploaded to the lab's deleted items (restorable; see 'deleted.restore'). */
  'image.delete': ['admin', 'pi', 'microscopist'],
  /** Also delete images someone else uploaded. */
  'image.deleteOthers': ['admin', 'pi'],
  /** Move a project with all its images to the lab's deleted items. */
  'project.delete': ['admin', 'pi'],
  /** See the lab's deleted items and bring one back while its retention period lasts. */
  'deleted.restore': ['admin', 'pi'],
  /** Remove a deleted item for good before its retention period ends (rows and stored files; audited). */
  'deleted.purge': ['admin', 'pi'],
  'mask.edit': ['admin', 'pi', 'annotator'],
  'analysis.run': ['admin', 'pi', 'microscopist', 'annotator'],
  'analysis.submit': ['admin', 'pi', 'annotator'],
  'analysis.review': ['admin', 'pi', 'reviewer'],
  'comment.write': ['admin', 'pi', 'microscopist', 'annotator', 'reviewer'],
  'comparison.use': ['admin', 'pi', 'reviewer'],
  'export.tables': ['admin', 'pi', 'reviewer'],
  'audit.read': ['admin', 'pi', 'reviewer'],
} as const satisfies Record<string, readonly LabRole[]>

export type LabAction = keyof typeof PERMISSIONS

/** True when `role` may perform `action`. */
export function roleAllows(role: LabRole, action: LabAction): boolean {
  return (PERMISSIONS[action] as readonly LabRole[]).includes(role)
}

/**
 * True when a person with `role` may delete this image: 'image.delete' covers their own uploads only, and anyone
 * else's also needs 'image.deleteOthers' (an image whose uploader's account is gone counts as someone else's).
 */
export function roleMayDeleteImage(role: LabRole, image: { uploadedById: number | null }, userId: number): boolean {
  return roleAllows(role, 'image.delete') && (image.uploadedById === userId || roleAllows(role, 'image.deleteOthers'))
}

/** True when any of the roles may perform `action` (a member holds one role per lab; this also serves lists). */
export function anyRoleAllows(roles: readonly LabRole[], action: LabAction): boolean {
  return roles.some((role) => roleAllows(role, action))
}
