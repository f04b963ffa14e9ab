/**
 * Note pins and their threads (discussion on a section): request bodies and
 * the answers of /api/sections/:id/threads, /api/threads/:id,
 * /api/threads/:id/messages and /api/messages/:id.
 *
 * Message bodies are plain text (line breaks kept; links are recognised when
 * shown, never HTML). A body over NOTE_BODY_MAX characters, a mention of
 * someone who is not a member of the project, and a point outside the image
 * are refused by the service with 422 naming `body`, `mentions[i]` and
 * `anchor.at`.
 */
import { z } from 'zod';
import { NOTE_OBJECT_KINDS, type NoteObjectKind } from '../notes/anchor';
import { safeText } from './text';

/** Longest message body, in characters (UTF-16 code units, as JavaScript counts them). */
export const NOTE_BODY_MAX = 4000;
/** Most people one message may mention. */
export const NOTE_MENTIONS_MAX = 20;

const pt = z.tuple([z.number().finite(), z.number().finite()]);
const objectId = safeText().min(1).max(64);

export const noteAnchorSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('point'), at: pt }),
  z.object({
    kind: z.literal('object'),
    buildupId: z.number().int().positive(),
    object: z.enum(NOTE_OBJECT_KINDS),
    cycleId: objectId.optional(),
    terminationId: objectId.optional(),
  }),
]);
export type NoteAnchorInput = z.infer<typeof noteAnchorSchema>;

const body = safeText({ multiline: true }).refine((s) => s.trim().length > 0, { message: 'is required' });
const mentions = z.array(z.number().int().positive()).max(NOTE_MENTIONS_MAX).optional().default([]);

/** POST /api/sections/:sectionId/threads — a Note pin and its first message. */
export const createThreadSchema = z.object({ anchor: noteAnchorSchema, body, mentions });
export type CreateThreadInput = z.input<typeof createThreadSchema>;

/** POST /api/threads/:id/messages — a reply. PATCH /api/messages/:id — an edit of one's own message. */
export const messageSchema = z.object({ body, mentions });
export type MessageInput = z.input<typeof messageSchema>;

/** PATCH /api/threads/:id — resolve or reopen. */
export const threadStateSchema = z.object({ resolved: z.boolean() });

export interface NotePerson {
  id: number;
  name: string;
}

export interface NoteMessageView {
  id: number;
  threadId: number;
  author: NotePerson | null;
  /** Empty for a deleted message (its tombstone). */
  body: string;
  mentions: NotePerson[];
  createdAt: string;
  editedAt: string | null;
  deletedAt: string | null;
}

export type NoteAnchorView =
  | { kind: 'point' }
  | { kind: 'object'; buildupId: number | null; object: NoteObjectKind; cycleId: string | null; terminationId: string | null; buildupName: string | null };

export interface NoteThreadView {
  id: number;
  sectionId: number;
  /** 1, 2, … per section. */
  number: number;
  anchor: NoteAnchorView;
  /** Last known position `[u, v]` in image pixels. */
  at: [number, number];
  /** The anchored object was deleted: the pin stays where it was last seen. */
  objectRemoved: boolean;
  resolved: boolean;
  resolvedAt: string | null;
  resolvedBy: NotePerson | null;
  createdBy: NotePerson | null;
  createdAt: string;
  updatedAt: string;
  messages: NoteMessageView[];
}
