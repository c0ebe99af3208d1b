// The members screen shared by clients and labs: the people, an invite form and the pending invitations.
import { getFormProps, getInputProps, getSelectProps, useForm, type SubmissionResult } from "@conform-to/react";
import { Form, useNavigation } from "react-router";
import { Badge, EmptyState, Field, FormError, PageHeader, TableCard } from "~/components/ui";
import { useFormat } from "~/components/locale";

interface MembersScreenProps {
  organisation: string;
  members: { name: string; email: string; role: string; since: string | Date }[];
  canInvite: boolean;
  invitingRole: string;
  roles: string[];
  invitationDays: number;
  invitations: { id: string; email: string; role: string; invitedBy: string | null; createdAt: string; expiresAt: string }[];
  lastResult?: SubmissionResult<string[]> | null;
  leadRole: string;
}

export function MembersScreen(p: MembersScreenProps) {
  const fmt = useFormat();
  const busy = useNavigation().state !== "idle";
  const [form, fields] = useForm<{ email: string; role: string }>({
    id: "invite",
    lastResult: p.lastResult,
    defaultValue: { email: "", role: p.roles[p.roles.length - 1] },
    shouldRevalidate: "onInput",
  });
  return (
    <div className="space-y-6">
      <PageHeader title="Members" subtitle={`People of ${p.organisation}`} />
      <TableCard columns={["Name", "E-mail", "Role", "Member since"]}>
        {p.members.map((m) => (
          <tr key={m.email}>
            <td className="font-medium">{m.name}</td>
            <td>{m.email}</td>
            <td>
              <Badge tone={m.role === p.leadRole ? "brand" : "neutral"}>{m.role}</Badge>
            </td>
            <td>{fmt.date(m.since)}</td>
          </tr>
        ))}
      </TableCard>
      {p.canInvite ? (
        <>
          <Form method="post" className="card grid gap-4 sm:grid-cols-[1fr_12rem_auto] sm:items-start" {...getFormProps(form)}>
            <input type="hidden" name="intent" value="invite" />
            <Field
              label="E-mail to invite"
              id={fields.email.id}
              errors={fields.email.errors}
              hint={`The link in the e-mail is valid for ${p.invitationDays} days.`}
            >
              <input className="input" autoComplete="off" {...getInputProps(fields.email, { type: "email" })} />
            </Field>
            <Field label="Role" id={fields.role.id} errors={fields.role.errors}>
              <select className="input" {...getSelectProps(fields.role)}>
                {p.roles.map((r) => (
                  <option key={r} value={r}>
                    {r}
                  </option>
                ))}
              </select>
            </Field>
            <button type="submit" className="btn-primary sm:mt-6" disabled={busy}>
              Send invitation
            </button>
            <div className="sm:col-span-3">
              <FormError errors={form.errors} />
            </div>
          </Form>
          <section>
            <h2 className="mb-2 text-lg font-semibold">Pending invitations</h2>
            {p.invitations.length === 0 ? (
              <EmptyState title="No pending invitations">Invitations that have not been accepted yet are listed here until they expire.</EmptyState>
            ) : (
              <TableCard columns={["E-mail", "Role", "Invited by", "Expires", ""]}>
                {p.invitations.map((i) => (
                  <tr key={i.id}>
                    <td className="font-medium">{i.email}</td>
                    <td>
                      <Badge>{i.role}</Badge>
                    </td>
                    <td>{i.invitedBy ?? "—"}</td>
                    <td>{fmt.date(i.expiresAt)}</td>
                    <td className="text-right">
                      <Form method="post">
                        <input type="hidden" name="intent" value="revoke" />
                        <input type="hidden" name="invitationId" value={i.id} />
                        <button type="submit" className="btn-secondary" disabled={busy} aria-label={`Withdraw the invitation to ${i.email}`}>
                          Withdraw
                        </button>
                      </Form>
                    </td>
                  </tr>
                ))}
              </TableCard>
            )}
          </section>
        </>
      ) : (
        <p className="text-sm text-ink-600">Only {p.invitingRole}s invite new people.</p>
      )}
    </div>
  );
}
