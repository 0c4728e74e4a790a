/** Site-admin views of outgoing mail: the outbox and what the local mail sink received. */
import { Op, type WhereOptions } from 'sequelize';
import { OutboxMail, SinkMail } from '../db/models';
import type { OutboxMailView, OutboxState, SinkMailView } from '../../shared/api';
import { offsetOf, paged, type PageQuery, type Paged } from './paging';

function stateOf(m: OutboxMail): OutboxState {
  if (m.sentAt) return 'sent';
  return m.nextAttemptAt ? 'pending' : 'failed';
}

const STATE_WHERE: Record<OutboxState, WhereOptions<OutboxMail>> = {
  sent: { sentAt: { [Op.ne]: null } },
  pending: { sentAt: null, nextAttemptAt: { [Op.ne]: null } },
  failed: { sentAt: null, nextAttemptAt: null },
};

export async function listOutbox(q: PageQuery & { state?: OutboxState | undefined }): Promise<Paged<OutboxMailView>> {
  const { rows, count } = await OutboxMail.findAndCountAll({
    where: q.state ? STATE_WHERE[q.state] : {},
    order: [['id', 'DESC']],
    limit: q.pageSize,
    offset: offsetOf(q),
  });
  return {
    items: rows.map((m) => ({
      id: String(m.id),
      to: m.toAddress,
      subject: m.subject,
      state: stateOf(m),
      attempts: m.attempts,
      nextAttemptAt: m.nextAttemptAt ? m.nextAttemptAt.toISOString() : null,
      lastError: m.lastError,
      sentAt: m.sentAt ? m.sentAt.toISOString() : null,
      createdAt: m.createdAt.toISOString(),
    })),
    total: count,
    page: q.page,
    pageSize: q.pageSize,
  };
}

export async function listSinkMails(q: PageQuery): Promise<Paged<SinkMailView>> {
  const { rows, count } = await SinkMail.findAndCountAll({ order: [['id', 'DESC']], limit: q.pageSize, offset: offsetOf(q) });
  return {
    items: rows.map((m) => ({ id: String(m.id), from: m.mailFrom, to: m.rcptTo, subject: m.subject, text: m.textBody, receivedAt: m.receivedAt.toISOString() })),
    total: count,
    page: q.page,
    pageSize: q.pageSize,
  };
}
