// Signing out is a POST to /sign-out (never a link), from any header.
import { Form } from "react-router";

export function SignOutButton() {
  return (
    <Form method="post" action="/sign-out">
      <button type="submit" className="btn-quiet">
        Sign out
      </button>
    </Form>
  );
}
