import type { EntityManager } from '@mikro-orm/postgresql';
import {
  roles as allRoles,
  type AdminUserView,
  type BoardView,
  type Role,
  type RolePolicyView,
  type Specialty,
} from '@emberline/shared';
import { ConflictError, NotFoundError } from '../../common/errors';
import type { Actor } from '../../common/request-context';
import { recordAudit } from '../audit/audit.service';
import { BoardMembership } from '../boards/board-membership.entity';
import { Board } from '../boards/board.entity';
import { hashPassword } from '../users/password';
import { RolePolicy } from '../users/role-policy.entity';
import { User } from '../users/user.entity';

/** Administration: accounts and their roles, boards and memberships, role policies. */
export class AdminService {
  constructor(private readonly em: EntityManager) {}

  async listUsers(): Promise<AdminUserView[]> {
    const users = await this.em.find(User, {}, { orderBy: { displayName: 'asc' } });
    const memberships = await this.em.find(BoardMembership, {}, { populate: ['board'] });
    return users.map((user) =>
      this.toView(
        user,
        memberships.filter((m) => m.user.id === user.id),
      ),
    );
  }

  async createUser(
    actor: Actor,
    body: { email: string; displayName: string; roles: Role[]; password?: string },
  ): Promise<AdminUserView> {
    const email = body.email.toLowerCase();
    if (await this.em.count(User, { email }))
      throw new ConflictError('An account with that e-mail address exists already.');
    const user = new User(email, body.displayName);
    user.roles = [...new Set(body.roles)];
    if (body.password) user.passwordHash = await hashPassword(body.password);
    this.em.persist(user);
    recordAudit(this.em, actor, {
      action: 'user.create',
      entityType: 'user',
      entityId: user.id,
      detail: { roles: user.roles },
    });
    await this.em.flush();
    return this.toView(user, []);
  }

  async updateUser(
    actor: Actor,
    id: string,
    body: { displayName?: string; roles?: Role[]; isActive?: boolean },
  ): Promise<AdminUserView> {
    const user = await this.em.findOne(User, id);
    if (!user) throw new NotFoundError('The user');
    if (
      actor.id === user.id &&
      (body.isActive === false || (body.roles && !body.roles.includes('administrator')))
    ) {
      throw new ConflictError(
        'Administrators cannot remove their own access; ask another administrator.',
      );
    }
    if (body.displayName !== undefined) user.displayName = body.displayName;
    if (body.roles !== undefined) user.roles = [...new Set(body.roles)];
    if (body.isActive !== undefined) user.isActive = body.isActive;
    recordAudit(this.em, actor, {
      action: 'user.update',
      entityType: 'user',
      entityId: user.id,
      detail: { fields: Object.keys(body), roles: user.roles },
    });
    await this.em.flush();
    const memberships = await this.em.find(
      BoardMembership,
      { user: user.id },
      { populate: ['board'] },
    );
    return this.toView(user, memberships);
  }

  async listBoards(): Promise<BoardView[]> {
    const boards = await this.em.find(
      Board,
      {},
      { orderBy: { name: 'asc' }, populate: ['memberships'] },
    );
    return boards.map((board) => ({
      id: board.id,
      name: board.name,
      description: board.description,
      memberCount: board.memberships.count(),
      mySpecialty: null,
      requiredSpecialties: [...board.requiredSpecialties],
    }));
  }

  /** The specialties that must be present for the board's quorum. */
  async setQuorum(
    actor: Actor,
    boardId: string,
    requiredSpecialties: Specialty[],
  ): Promise<{ requiredSpecialties: Specialty[] }> {
    const board = await this.em.findOne(Board, boardId);
    if (!board) throw new NotFoundError('The board');
    board.requiredSpecialties = [...requiredSpecialties];
    recordAudit(this.em, actor, {
      action: 'board.quorum',
      entityType: 'board',
      entityId: board.id,
      detail: { requiredSpecialties },
    });
    await this.em.flush();
    return { requiredSpecialties: [...board.requiredSpecialties] };
  }

  async createBoard(actor: Actor, body: { name: string; description: string }): Promise<BoardView> {
    if (await this.em.count(Board, { name: body.name }))
      throw new ConflictError('A board with that name exists already.');
    const board = new Board(body.name, body.description);
    this.em.persist(board);
    recordAudit(this.em, actor, {
      action: 'board.create',
      entityType: 'board',
      entityId: board.id,
    });
    await this.em.flush();
    return {
      id: board.id,
      name: board.name,
      description: board.description,
      memberCount: 0,
      mySpecialty: null,
      requiredSpecialties: [],
    };
  }

  async addMembership(
    actor: Actor,
    boardId: string,
    userId: string,
    specialty: Specialty,
  ): Promise<void> {
    const board = await this.em.findOne(Board, boardId);
    if (!board) throw new NotFoundError('The board');
    const user = await this.em.findOne(User, userId);
    if (!user) throw new NotFoundError('The user');
    const existing = await this.em.findOne(BoardMembership, { board: boardId, user: userId });
    if (existing) existing.specialty = specialty;
    else
      this.em.persist(
        new BoardMembership(
          this.em.getReference(Board, boardId, { wrapped: true }),
          this.em.getReference(User, userId, { wrapped: true }),
          specialty,
        ),
      );
    recordAudit(this.em, actor, {
      action: 'membership.create',
      entityType: 'board',
      entityId: boardId,
      detail: { userId, specialty },
    });
    await this.em.flush();
  }

  async removeMembership(actor: Actor, boardId: string, userId: string): Promise<void> {
    const membership = await this.em.findOne(BoardMembership, { board: boardId, user: userId });
    if (!membership) throw new NotFoundError('The membership');
    this.em.remove(membership);
    recordAudit(this.em, actor, {
      action: 'membership.delete',
      entityType: 'board',
      entityId: boardId,
      detail: { userId },
    });
    await this.em.flush();
  }

  async listRolePolicies(): Promise<RolePolicyView[]> {
    const policies = await this.em.find(RolePolicy, {});
    return allRoles.map((role) => ({
      role,
      requiresTotp: policies.find((p) => p.role === role)?.requiresTotp ?? false,
    }));
  }

  async setRolePolicy(actor: Actor, role: Role, requiresTotp: boolean): Promise<RolePolicyView> {
    const policy = (await this.em.findOne(RolePolicy, { role })) ?? new RolePolicy(role);
    policy.requiresTotp = requiresTotp;
    this.em.persist(policy);
    recordAudit(this.em, actor, {
      action: 'role-policy.update',
      entityType: 'role',
      entityId: role,
      detail: { requiresTotp },
    });
    await this.em.flush();
    return { role, requiresTotp };
  }

  private toView(user: User, memberships: BoardMembership[]): AdminUserView {
    return {
      id: user.id,
      email: user.email,
      displayName: user.displayName,
      roles: [...user.roles],
      isActive: user.isActive,
      hasTotp: user.totpEnabledAt !== null,
      signInMethod: user.samlNameId ? 'saml' : 'local',
      boards: memberships.map((m) => ({
        boardId: m.board.id,
        boardName: m.board.getEntity().name,
        specialty: m.specialty,
      })),
      lastSignInAt: user.lastSignInAt?.toISOString() ?? null,
    };
  }
}
