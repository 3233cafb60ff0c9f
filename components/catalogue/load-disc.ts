import "server-only";
import { notFound } from "next/navigation";
import { cache } from "react";
import { getDisc } from "@/lib/catalogue/discs";
import { AppError } from "@/lib/http/errors";
import type { DiscJson } from "./types";

/** Reads a disc for a page (a missing one is the 404 page), in the shape the API gives the browser. */
export const loadDisc = cache(async (id: string): Promise<DiscJson> => {
  try {
    return JSON.parse(JSON.stringify(await getDisc(id))) as DiscJson;
  } catch (err) {
    if (err instanceof AppError && err.status === 404) notFound();
    throw err;
  }
});
