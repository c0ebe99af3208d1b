// Signing out is a POST to /sign-out (never a link), from any header.
import { Form } from "react-router";
import { SubmitButton } from "./pending";

export function SignOutButton() {
  return (
    <Form method="post" action="/sign-out">
      <SubmitButton className="btn-quiet" action="/sign-out" pendingText="Signing out…">
        Sign out
      </SubmitButton>
    </Form>
  );
}
