import type { LabRole } from '../../shared/api/common';

/** Who may act on which case: set by the requireCaseRole middleware, passed to the case services. */
export interface CaseAccess {
  caseId: string;
  labId: string;
  role: LabRole;
  archived: boolean;
}

/** Who is acting: their id for the audit trail and their name for mails and replies. */
export interface Actor {
  id: string;
  name: string;
}
