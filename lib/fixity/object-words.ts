// What a stored object is, in words: for the curators' fixity mail, the audit page's alerts
// and its event sentences alike. No imports: the browser reads it too.

export type StoredObjectKind = "transfer" | "render" | "label_image";

export const objectKindWords: Record<StoredObjectKind, string> = {
  transfer: "flat transfer",
  render: "access copy",
  label_image: "label image",
};

/** The words for a kind read from a stored record (an event's payload): a flat transfer when it names none this knows. */
export const objectWords = (kind: unknown): string =>
  typeof kind === "string" && Object.hasOwn(objectKindWords, kind)
    ? objectKindWords[kind as StoredObjectKind]
    : objectKindWords.transfer;
