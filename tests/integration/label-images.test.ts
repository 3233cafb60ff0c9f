// Label images: the archivist adds photographs or scans of a side's label and of the
// sleeve straight to the bucket; the server checks what the bytes are, makes a thumbnail
// with sharp, and refuses (deleting what was stored) a file that is not a JPEG, PNG or
// TIFF image or says it is another type than it is. Stored images are checked by fixity.
import { HeadObjectCommand } from "@aws-sdk/client-s3";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { api, appUrl } from "../support/app";
import { testBucketClient } from "../support/bucket";
import { testDb } from "../support/db";
import { addLabelImage, labelPicture } from "../support/label-images";
import { assignedDisc, type LabCookies, labCookies, until } from "../support/pipeline";

const tag = Date.now().toString(36);
let c: LabCookies;
let discId: string;
let sideIds: string[];

beforeAll(async () => {
  c = await labCookies();
  ({ discId, sideIds } = await assignedDisc(c, `LI-${tag}`, ["A", "B"]));
});

afterAll(async () => {
  await testDb.destroy();
});

async function objectExists(key: string): Promise<boolean> {
  try {
    await testBucketClient().send(new HeadObjectCommand({ Bucket: "rillbook", Key: key }));
    return true;
  } catch {
    return false;
  }
}

describe("adding label images", () => {
  it("stores a PNG of side A's label with its SHA-256, size and a server-made thumbnail, and records the event", async () => {
    const png = await labelPicture("png", 900);
    const done = await addLabelImage(c.archivist, discId, png, {
      kind: "label",
      sideId: sideIds[0],
      contentType: "image/png",
      fileName: "A-label.png",
    });
    expect(done.status).toBe(201);
    expect(done.body).toMatchObject({ format: "png", width: 900, height: 900, bytes: png.length });
    const list = await api(`/api/discs/${discId}/label-images`, { cookie: c.engineer });
    expect(list.status).toBe(200);
    const img = list.body.labelImages.find((l: { id: string }) => l.id === done.labelImageId);
    expect(img).toMatchObject({ kind: "label", side: "A", format: "png" });

    const thumb = await fetch(`${appUrl}${img.thumbnailUrl}`, { headers: { cookie: c.curator } });
    expect(thumb.status).toBe(200);
    expect(thumb.headers.get("content-type")).toBe("image/jpeg");
    const meta = await sharp(Buffer.from(await thumb.arrayBuffer())).metadata();
    expect(meta.format).toBe("jpeg");
    expect(Math.max(meta.width, meta.height)).toBe(480);

    const original = await fetch(`${appUrl}${img.downloadUrl}`, { headers: { cookie: c.curator } });
    expect(Buffer.from(await original.arrayBuffer()).equals(png)).toBe(true);

    const event = await testDb
      .selectFrom("provenance_events")
      .select("payload")
      .where("disc_id", "=", discId)
      .where("kind", "=", "disc.label_image_added")
      .executeTakeFirstOrThrow();
    expect(event.payload).toMatchObject({ kind: "label", side: "A", format: "png", bytes: png.length });
  });

  it("stores a TIFF scan of the sleeve and a JPEG of side B's label", async () => {
    const tiff = await labelPicture("tiff", 300);
    const sleeve = await addLabelImage(c.archivist, discId, tiff, {
      kind: "sleeve",
      contentType: "image/tiff",
      fileName: "sleeve.tif",
    });
    expect(sleeve.status).toBe(201);
    expect(sleeve.body.format).toBe("tiff");
    const jpeg = await labelPicture("jpeg", 400);
    const b = await addLabelImage(c.archivist, discId, jpeg, {
      kind: "label",
      sideId: sideIds[1],
      contentType: "image/jpeg",
      fileName: "B.jpg",
    });
    expect(b.status).toBe(201);
  });

  it("refuses a file that is not an image, says so plainly, and leaves nothing in the bucket", async () => {
    const text = Buffer.from("%PDF-1.7\nThis is a shipping note, not a label.\n");
    const refused = await addLabelImage(c.archivist, discId, text, {
      kind: "label",
      sideId: sideIds[0],
      contentType: "image/jpeg",
      fileName: "note.jpg",
    });
    expect(refused.status).toBe(422);
    expect(refused.body.error.message).toMatch(
      /not a JPEG, PNG or TIFF image: its first bytes are those of a PDF document/,
    );
    const row = await testDb
      .selectFrom("label_images")
      .select(["state", "object_key", "thumbnail_key"])
      .where("id", "=", refused.labelImageId!)
      .executeTakeFirstOrThrow();
    expect(row.state).toBe("refused");
    expect(await objectExists(row.object_key)).toBe(false);
  });

  it("refuses a JPEG sent as a PNG (a file lying about its type) and deletes it", async () => {
    const jpeg = await labelPicture("jpeg", 200);
    const refused = await addLabelImage(c.archivist, discId, jpeg, {
      kind: "label",
      sideId: sideIds[0],
      contentType: "image/png",
      fileName: "looks-like.png",
    });
    expect(refused.status).toBe(422);
    expect(refused.body.error.message).toMatch(
      /sent as a PNG image \(image\/png\) but its bytes are a JPEG image/,
    );
    const row = await testDb
      .selectFrom("label_images")
      .select(["state", "object_key"])
      .where("id", "=", refused.labelImageId!)
      .executeTakeFirstOrThrow();
    expect(row.state).toBe("refused");
    expect(await objectExists(row.object_key)).toBe(false);
  });

  it("refuses a type other than JPEG, PNG or TIFF before anything is stored, and a side of another disc", async () => {
    const gif = await api(`/api/discs/${discId}/label-images`, {
      cookie: c.archivist,
      method: "POST",
      body: { kind: "sleeve", fileName: "x.gif", bytes: 100, contentType: "image/gif" },
    });
    expect(gif.status).toBe(422);
    expect(gif.body.error.fields.contentType[0]).toMatch(/JPEG, PNG or TIFF/);
    const other = await assignedDisc(c, `LI2-${tag}`, ["A"]);
    const wrongSide = await api(`/api/discs/${discId}/label-images`, {
      cookie: c.archivist,
      method: "POST",
      body: {
        kind: "label",
        sideId: other.sideIds[0],
        fileName: "x.png",
        bytes: 100,
        contentType: "image/png",
      },
    });
    expect(wrongSide.status).toBe(422);
  });

  it("lets archivists and admins add images, and every role see them", async () => {
    const body = { kind: "sleeve", fileName: "x.png", bytes: 100, contentType: "image/png" };
    for (const cookie of [c.engineer, c.curator])
      expect((await api(`/api/discs/${discId}/label-images`, { cookie, method: "POST", body })).status).toBe(
        403,
      );
    for (const cookie of [c.engineer, c.curator, c.archivist])
      expect((await api(`/api/discs/${discId}/label-images`, { cookie })).status).toBe(200);
    expect((await api(`/api/discs/${discId}/label-images`)).status).toBe(401);
  });

  it("checks label images in the disc's fixity check, the sleeve's included", async () => {
    const asked = await api("/api/fixity", { cookie: c.curator, method: "POST", body: { discId } });
    expect(asked.status).toBe(202);
    // Two sides' label images and the sleeve: three objects (no transfer yet on this disc).
    expect(asked.body.queued).toBe(3);
    const checks = await until("the label images' fixity checks", async () => {
      const rows = await testDb
        .selectFrom("fixity_checks")
        .select(["object_kind", "outcome", "side_id"])
        .where("object_kind", "=", "label_image")
        .where((eb) => eb.or([eb("disc_id", "=", discId)]))
        .where("checked_at", ">=", new Date(asked.body.askedAt))
        .execute();
      return rows.length >= 3 ? rows : undefined;
    });
    expect(checks.map((x) => x.outcome)).toEqual(["pass", "pass", "pass"]);
    expect(checks.filter((x) => x.side_id === null)).toHaveLength(1);
  });
});

describe("withdrawing a label image added by mistake", () => {
  let imageId: string;
  let objectKey: string;

  beforeAll(async () => {
    const added = await addLabelImage(c.archivist, discId, await labelPicture("png", 320), {
      kind: "label",
      sideId: sideIds[1],
      contentType: "image/png",
      fileName: "another-disc-label.png",
    });
    expect(added.status).toBe(201);
    imageId = added.labelImageId!;
    objectKey = (
      await testDb
        .selectFrom("label_images")
        .select("object_key")
        .where("id", "=", imageId)
        .executeTakeFirstOrThrow()
    ).object_key;
  });

  it("needs a reason, and is for archivists and admins only", async () => {
    const noReason = await api(`/api/label-images/${imageId}/withdraw`, {
      cookie: c.archivist,
      method: "POST",
      body: { reason: "   " },
    });
    expect(noReason.status).toBe(422);
    expect(JSON.stringify(noReason.body)).toMatch(/Say why the image is withdrawn/);
    for (const cookie of [c.engineer, c.curator])
      expect(
        (
          await api(`/api/label-images/${imageId}/withdraw`, {
            cookie,
            method: "POST",
            body: { reason: "x" },
          })
        ).status,
      ).toBe(403);
    const listed = await api(`/api/discs/${discId}/label-images`, { cookie: c.archivist });
    expect(listed.body.labelImages.map((i: { id: string }) => i.id)).toContain(imageId);
  });

  it("leaves the disc's page and record with its reason on the timeline, keeps the file, and is final", async () => {
    const reason = "The label of another disc of the accession, photographed by mistake.";
    const done = await api(`/api/label-images/${imageId}/withdraw`, {
      cookie: c.archivist,
      method: "POST",
      body: { reason },
    });
    expect(done.status).toBe(200);
    const listed = await api(`/api/discs/${discId}/label-images`, { cookie: c.engineer });
    expect(listed.body.labelImages.map((i: { id: string }) => i.id)).not.toContain(imageId);
    expect(listed.body.labelImages).toHaveLength(3);
    expect((await api(`/api/label-images/${imageId}/thumbnail`, { cookie: c.engineer })).status).toBe(404);
    const record = await api(`/api/discs/${discId}/export?format=json`, { cookie: c.curator });
    expect(record.status).toBe(200);
    expect(JSON.stringify(record.body.labelImages)).not.toContain(imageId);
    // The file is kept: the provenance log names it.
    expect(await objectExists(objectKey)).toBe(true);
    const event = await testDb
      .selectFrom("provenance_events")
      .select("payload")
      .where("kind", "=", "disc.label_image_withdrawn")
      .where("subject_id", "=", discId)
      .executeTakeFirstOrThrow();
    expect(event.payload).toMatchObject({ labelImageId: imageId, side: "B", reason });
    const again = await api(`/api/label-images/${imageId}/withdraw`, {
      cookie: c.archivist,
      method: "POST",
      body: { reason: "twice" },
    });
    expect(again.status).toBe(409);
  });

  it("is refused by the database any change but withdrawing, and any deletion", async () => {
    // The withdrawn image cannot be put back, nor its reason rewritten.
    await expect(
      testDb.updateTable("label_images").set({ state: "stored" }).where("id", "=", imageId).execute(),
    ).rejects.toThrow(/never changed/);
    await expect(
      testDb
        .updateTable("label_images")
        .set({ withdrawn_reason: "other" })
        .where("id", "=", imageId)
        .execute(),
    ).rejects.toThrow(/never changed/);
    await expect(testDb.deleteFrom("label_images").where("id", "=", imageId).execute()).rejects.toThrow(
      /never deleted/,
    );
    // A stored image's hash or file cannot be changed, and it cannot be withdrawn without a reason.
    const stored = await testDb
      .selectFrom("label_images")
      .select("id")
      .where("disc_id", "=", discId)
      .where("state", "=", "stored")
      .executeTakeFirstOrThrow();
    await expect(
      testDb
        .updateTable("label_images")
        .set({ sha256: "0".repeat(64) })
        .where("id", "=", stored.id)
        .execute(),
    ).rejects.toThrow(/may only be withdrawn/);
    await expect(
      testDb
        .updateTable("label_images")
        .set({ state: "withdrawn", withdrawn_at: new Date() })
        .where("id", "=", stored.id)
        .execute(),
    ).rejects.toThrow(/label_images_withdrawn/);
  });
});
