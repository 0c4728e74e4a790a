import type { RequestHandler } from 'express';
import { currentUser } from '../middleware/auth';
import { labsOf } from '../services/lab-service';

export const meRoute: RequestHandler = async (req, res) => {
  const { tokenId: _tokenId, tokenExp, labRoles: _labRoles, libraryVersions: _libraryVersions, ...user } = currentUser(req);
  const labs = await labsOf(user.id, { page: 1, pageSize: 1000 });
  res.json({
    user,
    memberships: labs.items.map((lab) => ({ labId: lab.id, labName: lab.name, role: lab.role })),
    tokenExpiresAt: new Date(tokenExp * 1000).toISOString(),
  });
};
