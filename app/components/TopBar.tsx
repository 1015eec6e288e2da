import { Form, Link } from "react-router";

/** The thin bar across the top of every signed-in page. */
export function TopBar({ user }: { user: { name: string; email: string } | null }) {
  return (
    <header className="flex h-11 items-center gap-4 border-b border-deep-800 bg-deep-900 px-4 text-sand-50">
      <Link to="/" className="font-semibold tracking-tight">
        Lowstand
      </Link>
      <span className="hidden text-xs text-sea-200 sm:inline">drowned landscapes · site potential · core targets</span>
      <span className="flex-1" />
      {user ? (
        <>
          <Link to="/account" className="text-sm text-sand-100 hover:underline" title={user.email}>
            {user.name}
          </Link>
          <Form method="post" action="/logout">
            <button type="submit" className="rounded-sm px-2 py-1 text-sm text-sand-200 hover:bg-deep-700">
              Sign out
            </button>
          </Form>
        </>
      ) : (
        <Link to="/login" className="text-sm text-sand-100 hover:underline">
          Sign in
        </Link>
      )}
    </header>
  );
}
