import { Type } from 'typebox';

/** One audited planner action (planner_actions): on a service event or a finding, with the state before and after. */
export const AuditEntry = Type.Object({
  id: Type.String(),
  action: Type.String({
    description:
      'acknowledge, defer, reopen; correct or delete (an event); service-event-correct / service-event-delete (a finding an event change touched)',
  }),
  keyId: Type.String(),
  at: Type.String({ format: 'date-time' }),
  before: Type.Union([Type.Record(Type.String(), Type.Unknown()), Type.Null()]),
  after: Type.Union([Type.Record(Type.String(), Type.Unknown()), Type.Null()]),
});
