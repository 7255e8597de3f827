import { z } from 'zod'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser, assertLabAction } from '../auth/guards'
import { Lab, Membership, User } from '../models'
import { LAB_ROLES } from '../../shared/auth/permissions'

const MemberSchema = z.object({ userId: z.number().int(), name: z.string(), email: z.string(), role: z.enum(LAB_ROLES), active: z.boolean() })
const LabSchema = z.object({ id: z.number().int(), name: z.string(), institution: z.string() })

export function registerLabRoutes(api: ApiDefinition): void {
  apiRoute(api, {
    method: 'get',
    path: '/labs',
    summary: 'Labs the signed-in person belongs to',
    tags: ['labs'],
    access: 'signed-in',
    responses: { 200: { description: 'Labs', schema: z.array(LabSchema) } },
    handler: async (req) => {
      const labs = await Lab.findAll({ where: { id: currentUser(req).memberships.map((m) => m.labId) }, order: [['name', 'ASC']] })
      return labs.map((l) => ({ id: l.id, name: l.name, institution: l.institution }))
    },
  })
  apiRoute(api, {
    method: 'get',
    path: '/labs/:labId/members',
    summary: 'Members of a lab with their roles',
    tags: ['labs'],
    access: 'signed-in',
    params: z.object({ labId: z.coerce.number().int().positive() }),
    responses: { 200: { description: 'Members', schema: z.array(MemberSchema) }, 404: { description: 'No such lab' } },
    handler: async (req, _res, { params }) => {
      assertLabAction(currentUser(req), params.labId, 'lab.read', 'lab')
      const rows = await Membership.findAll({ where: { labId: params.labId }, include: [{ model: User, attributes: ['id', 'name', 'email', 'active'] }], order: [['role', 'ASC']] })
      return rows.map((m) => {
        const u = (m as unknown as { User: User }).User
        return { userId: u.id, name: u.name, email: u.email, role: m.role, active: m.active && u.active }
      })
    },
  })
}
