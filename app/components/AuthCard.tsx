import type { ReactNode } from "react";
import { TopBar } from "./TopBar";

/** The narrow card used by sign-in, reset and invitation pages. */
export function AuthCard({ title, children }: { title: string; children: ReactNode }) {
  return (
    <div className="min-h-screen bg-sand-50">
      <TopBar user={null} />
      <main className="mx-auto mt-16 max-w-sm rounded-md border border-sand-200 bg-white p-6 shadow-sm">
        <h1 className="mb-4 text-xl font-semibold">{title}</h1>
        {children}
      </main>
    </div>
  );
}
