import "server-only";
import { notFound } from "next/navigation";
import { AppError } from "@/lib/http/errors";
import { uuid } from "@/lib/http/route";

/**
 * Reads an item or a chain of the register for its page: an address whose id cannot be a
 * row's, or names none, is the 404 page (as the API answers 404 for it), not an error page.
 */
export async function loadOr404<T>(id: string, read: (id: string) => Promise<T>): Promise<T> {
  if (!uuid.test(id)) notFound();
  try {
    return await read(id);
  } catch (err) {
    if (err instanceof AppError && err.status === 404) notFound();
    throw err;
  }
}
