// A review's comments as threads: replies indented under the comment they answer, oldest first.
import { Form } from "react-router";
import { useState } from "react";
import { formatUtc } from "~/format";

export interface ThreadComment {
  id: number;
  parentId: number | null;
  body: string;
  author: string;
  createdAt: string;
}

export function CommentThread({ comments, mayReply }: { comments: ThreadComment[]; mayReply: boolean }) {
  const ids = new Set(comments.map((c) => c.id));
  const children = new Map<number | null, ThreadComment[]>();
  for (const c of comments) {
    const key = c.parentId !== null && ids.has(c.parentId) ? c.parentId : null;
    children.set(key, [...(children.get(key) ?? []), c]);
  }
  if (!comments.length) return <p className="mt-1 text-sm text-sediment-600">No comments yet.</p>;
  return <Branch parent={null} children={children} mayReply={mayReply} depth={0} />;
}

function Branch({ parent, children, mayReply, depth }: { parent: number | null; children: Map<number | null, ThreadComment[]>; mayReply: boolean; depth: number }) {
  const list = children.get(parent) ?? [];
  if (!list.length) return null;
  return (
    <ul className={depth ? "ml-5 border-l border-sand-300 pl-3" : "mt-2"} data-testid={depth ? undefined : "comment-thread"}>
      {list.map((c) => (
        <li key={c.id} className="py-1.5" data-comment-id={c.id}>
          <p className="text-xs text-sediment-600">
            <strong className="text-sediment-800">{c.author}</strong> · {formatUtc(c.createdAt)} UTC
          </p>
          <p className="whitespace-pre-wrap text-sm">{c.body}</p>
          {mayReply ? <Reply parentId={c.id} /> : null}
          <Branch parent={c.id} children={children} mayReply={mayReply} depth={depth + 1} />
        </li>
      ))}
    </ul>
  );
}

function Reply({ parentId }: { parentId: number }) {
  const [open, setOpen] = useState(false);
  if (!open)
    return (
      <button type="button" className="text-xs text-deep-700 underline" onClick={() => setOpen(true)}>
        Reply
      </button>
    );
  return (
    <Form method="post" className="mt-1 space-y-1" onSubmit={() => setOpen(false)}>
      <input type="hidden" name="intent" value="comment" />
      <input type="hidden" name="parentId" value={parentId} />
      <textarea name="body" required maxLength={4000} rows={2} aria-label="Reply" className="block w-full rounded-sm border border-sand-300 px-2 py-1 text-sm" />
      <button type="submit" className="rounded-sm border border-sand-400 px-2 py-0.5 text-xs">
        Send the reply
      </button>
    </Form>
  );
}
