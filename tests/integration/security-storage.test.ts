// Storage, tried as a hostile insider would: nobody can claim or delete another side's
// preservation master, an upload is named by the id the server gave it and nothing
// else, its declared size holds, it completes once, and download names are safe for
// any stored text. Against the running app, worker, PostgreSQL and s3rver. Its test
// signals (seeds 1021–1029) are its own: were another file to store the same bytes for a
// side first, a completion here would answer the duplicate-file question instead.
import { createHash } from "node:crypto";
import { GetObjectCommand, HeadObjectCommand } from "@aws-sdk/client-s3";
import { sql } from "kysely";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { hashPassword } from "@/lib/auth/password";
import { api, appUrl, signInCookie } from "../support/app";
import { testDb } from "../support/db";
import {
  assignedDisc,
  chooseCurve,
  flatTransfer,
  type LabCookies,
  labCookies,
  renderAndWait,
  sendParts,
  sha256Of,
  startUpload,
  transferDetails,
  uploadTransfer,
} from "../support/pipeline";
import { testBucketClient } from "../support/bucket";

const tag = Date.now().toString(36);
const bucket = testBucketClient();

let c: LabCookies;
/** The same lab, with a second engineer (a colleague) in the engineer's place. */
let colleague: LabCookies;
/** Sides assigned to the demo engineer, each with its curve chosen. */
let own: string[];
/** The colleague's side and its accepted master. */
let victim: { sideId: string; key: string; sha256: string; bytes: Uint8Array };

async function objectExists(key: string): Promise<boolean> {
  try {
    await bucket.send(new HeadObjectCommand({ Bucket: "rillbook", Key: key }));
    return true;
  } catch {
    return false;
  }
}

async function storedSha256(key: string): Promise<string> {
  const res = await bucket.send(new GetObjectCommand({ Bucket: "rillbook", Key: key }));
  return createHash("sha256")
    .update(await res.Body!.transformToByteArray())
    .digest("hex");
}

const uploadState = async (id: string) =>
  (
    await testDb
      .selectFrom("uploads")
      .select(["state", "reason"])
      .where("id", "=", id)
      .executeTakeFirstOrThrow()
  ).state;

beforeAll(async () => {
  c = await labCookies();
  const email = `engineer2-${tag}@test.example`;
  await testDb
    .insertInto("users")
    .values({
      email,
      name: "Second Engineer",
      role: "engineer",
      password_hash: await hashPassword("second engineer pass"),
    })
    .execute();
  colleague = { ...c, engineer: await signInCookie(email, "second engineer pass") };

  own = (await assignedDisc(c, `SS-OWN-${tag}`, ["A", "B", "C", "D", "E", "F", "G", "H"])).sideIds;
  await chooseCurve(c, own);

  const theirs = await assignedDisc(c, `SS-THEIRS-${tag}`, ["A", "B"], email);
  await chooseCurve(colleague, theirs.sideIds);
  const bytes = flatTransfer(1, 1021);
  const up = await uploadTransfer(colleague, theirs.sideIds[0], bytes, "theirs-A.wav");
  expect(up.done.status).toBe(201);
  victim = { sideId: theirs.sideIds[0], key: up.key, sha256: sha256Of(bytes), bytes };
}, 120_000);

afterAll(async () => {
  bucket.destroy();
  await testDb.destroy();
});

/** The victim's master is where it was, unchanged, and still recorded as theirs alone. */
async function expectVictimIntact() {
  expect(await objectExists(victim.key)).toBe(true);
  expect(await storedSha256(victim.key)).toBe(victim.sha256);
  const claims = await testDb
    .selectFrom("transfers")
    .select(["side_id"])
    .where("object_key", "=", victim.key)
    .execute();
  expect(claims).toEqual([{ side_id: victim.sideId }]);
}

describe("a preservation master cannot be claimed or lost", () => {
  it("a path-traversal key cannot claim another side's file: the server completes only the upload's own object", async () => {
    const sideId = own[0];
    const traversal = `transfers/${sideId}/00000000-0000-4000-8000-000000000000/../../${victim.key.split("/").slice(1).join("/")}`;
    // The attacker's own file, the same length as the victim's master, with the victim's size and SHA-256.
    const mine = flatTransfer(1, 1022);
    expect(mine.length).toBe(victim.bytes.length);
    const { uploadId, partSize, urls, key } = await startUpload(
      c.engineer,
      sideId,
      "../../theirs-A.wav",
      mine.length,
    );
    expect(key).toBe(`transfers/${sideId}/${uploadId}/flat.wav`);
    const parts = await sendParts(mine, partSize, urls);
    const done = await api("/api/uploads/complete", {
      cookie: c.engineer,
      method: "POST",
      body: {
        key: traversal,
        uploadId,
        parts,
        sha256: victim.sha256,
        bytes: victim.bytes.length,
        ...transferDetails,
      },
    });
    expect(done.status).toBe(422);
    expect(done.body.error.message).toMatch(/SHA-256/);
    await expectVictimIntact();
    expect(
      await testDb.selectFrom("transfers").select("id").where("side_id", "=", sideId).execute(),
    ).toHaveLength(0);
    expect(await objectExists(key)).toBe(false);

    // With the attacker's own checksum the file is accepted, as the attacker's own object, never the victim's.
    const again = await uploadTransfer(c, sideId, mine, "../../theirs-A.wav");
    expect(again.done.status).toBe(201);
    const t = await testDb
      .selectFrom("transfers")
      .select(["object_key", "side_id", "file_name", "upload_id"])
      .where("id", "=", again.done.body.transferId)
      .executeTakeFirstOrThrow();
    expect(t).toEqual({
      object_key: again.key,
      side_id: sideId,
      file_name: "../../theirs-A.wav",
      upload_id: again.uploadId,
    });
    expect(t.object_key.startsWith(`transfers/${sideId}/`)).toBe(true);
    await expectVictimIntact();
  });

  it("a wrong SHA-256 refusal deletes only its own object: the other side's master, with the same SHA-256, is still there", async () => {
    const sideId = own[1];
    // The very same bytes as the victim's master, so the same SHA-256, sent with a wrong checksum.
    const { uploadId, partSize, urls, key } = await startUpload(
      c.engineer,
      sideId,
      "theirs-A.wav",
      victim.bytes.length,
    );
    const parts = await sendParts(victim.bytes, partSize, urls);
    const done = await api("/api/uploads/complete", {
      cookie: c.engineer,
      method: "POST",
      body: {
        key: victim.key,
        uploadId,
        parts,
        sha256: "0".repeat(64),
        bytes: victim.bytes.length,
        ...transferDetails,
      },
    });
    expect(done.status).toBe(422);
    expect(done.body.error.message).toMatch(/SHA-256/);
    expect(await objectExists(key)).toBe(false);
    expect(await uploadState(uploadId)).toBe("refused");
    await expectVictimIntact();
  });

  it(
    "a colleague's upload id cannot be used: listing, signing, completing and cancelling " +
      "it answer 404, and the colleague's own upload still completes",
    async () => {
      const bytes = flatTransfer(1, 1023);
      const theirs = await startUpload(
        colleague.engineer,
        (
          await testDb
            .selectFrom("sides")
            .select("id")
            .where(
              "disc_id",
              "=",
              (
                await testDb
                  .selectFrom("sides")
                  .select("disc_id")
                  .where("id", "=", victim.sideId)
                  .executeTakeFirstOrThrow()
              ).disc_id,
            )
            .where("designation", "=", "B")
            .executeTakeFirstOrThrow()
        ).id,
        "theirs-B.wav",
        bytes.length,
      );
      const parts = await sendParts(bytes, theirs.partSize, theirs.urls);

      const listed = await api(`/api/uploads?uploadId=${theirs.uploadId}`, { cookie: c.engineer });
      const signed = await api("/api/uploads/parts", {
        cookie: c.engineer,
        method: "POST",
        body: { uploadId: theirs.uploadId, partNumbers: [1] },
      });
      const completed = await api("/api/uploads/complete", {
        cookie: c.engineer,
        method: "POST",
        body: {
          uploadId: theirs.uploadId,
          parts,
          sha256: sha256Of(bytes),
          bytes: bytes.length,
          ...transferDetails,
        },
      });
      const aborted = await api("/api/uploads/abort", {
        cookie: c.engineer,
        method: "POST",
        body: { uploadId: theirs.uploadId },
      });
      expect([listed.status, signed.status, completed.status, aborted.status]).toEqual([404, 404, 404, 404]);
      expect(signed.body.urls).toBeUndefined();
      expect(await uploadState(theirs.uploadId)).toBe("open");

      const theirsDone = await api("/api/uploads/complete", {
        cookie: colleague.engineer,
        method: "POST",
        body: {
          uploadId: theirs.uploadId,
          parts,
          sha256: sha256Of(bytes),
          bytes: bytes.length,
          ...transferDetails,
        },
      });
      expect(theirsDone.status).toBe(201);
      expect(await storedSha256(theirs.key)).toBe(sha256Of(bytes));
    },
  );

  it("an empty file is refused with “The file is empty (0 bytes).” as the answer's own message", async () => {
    const res = await api("/api/uploads", {
      cookie: c.engineer,
      method: "POST",
      body: { sideId: own[2], fileName: "empty.wav", bytes: 0 },
    });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toBe("The file is empty (0 bytes).");
    expect(res.body.error.fields.bytes).toEqual(["The file is empty (0 bytes)."]);
  });

  it("the declared size is enforced: 1000 bytes declared and more sent is refused, and the object removed", async () => {
    const sideId = own[2];
    const bytes = flatTransfer(1, 1024);
    expect(bytes.length).toBeGreaterThan(1000);
    const { uploadId, urls, key } = await startUpload(c.engineer, sideId, "small.wav", 1000);
    expect(urls.map((u) => u.partNumber)).toEqual([1]);
    // The whole file into the one part the 1000 bytes need.
    const put = await fetch(urls[0].url, { method: "PUT", body: Buffer.from(bytes) });
    expect(put.status).toBe(200);
    const done = await api("/api/uploads/complete", {
      cookie: c.engineer,
      method: "POST",
      body: {
        uploadId,
        parts: [{ partNumber: 1, etag: put.headers.get("etag") }],
        sha256: sha256Of(bytes),
        bytes: 1000,
        ...transferDetails,
      },
    });
    expect(done.status).toBe(422);
    expect(done.body.error.message).toContain(`${bytes.length} bytes, not the 1000`);
    expect(await objectExists(key)).toBe(false);
    expect(await uploadState(uploadId)).toBe("refused");
    expect(
      await testDb.selectFrom("transfers").select("id").where("side_id", "=", sideId).execute(),
    ).toHaveLength(0);
  });

  it("the declared size is enforced: no part beyond what it needs is signed, and a completion naming more parts or another size is refused", async () => {
    const sideId = own[3];
    const bytes = flatTransfer(1, 1025);
    const { uploadId, partSize, urls, key } = await startUpload(
      c.engineer,
      sideId,
      "parts.wav",
      bytes.length,
    );
    const more = await api("/api/uploads/parts", {
      cookie: c.engineer,
      method: "POST",
      body: { uploadId, partNumbers: [1, 2] },
    });
    expect(more.status).toBe(422);
    expect(more.body.error.fields.partNumbers[0]).toMatch(/no part 2/);

    const parts = await sendParts(bytes, partSize, urls);
    const bigger = await api("/api/uploads/complete", {
      cookie: c.engineer,
      method: "POST",
      body: {
        uploadId,
        parts: [...parts, { partNumber: 2, etag: parts[0].etag }],
        sha256: sha256Of(bytes),
        bytes: bytes.length,
        ...transferDetails,
      },
    });
    expect(bigger.status).toBe(422);
    expect(bigger.body.error.fields.parts).toBeDefined();
    expect(await uploadState(uploadId)).toBe("refused");

    const other = await startUpload(c.engineer, sideId, "parts.wav", bytes.length);
    const otherParts = await sendParts(bytes, other.partSize, other.urls);
    const resized = await api("/api/uploads/complete", {
      cookie: c.engineer,
      method: "POST",
      body: {
        uploadId: other.uploadId,
        parts: otherParts,
        sha256: sha256Of(bytes),
        bytes: bytes.length + 1,
        ...transferDetails,
      },
    });
    expect(resized.status).toBe(422);
    expect(resized.body.error.fields.bytes).toBeDefined();
    expect(await objectExists(key)).toBe(false);
    expect(await objectExists(other.key)).toBe(false);
  });

  it("a second completion answers 409 with a clear message and leaves the accepted transfer as it was", async () => {
    const sideId = own[4];
    const bytes = flatTransfer(1, 1026);
    const { uploadId, partSize, urls, key } = await startUpload(
      c.engineer,
      sideId,
      "twice.wav",
      bytes.length,
    );
    const parts = await sendParts(bytes, partSize, urls);
    const body = { uploadId, parts, sha256: sha256Of(bytes), bytes: bytes.length, ...transferDetails };
    const first = await api("/api/uploads/complete", { cookie: c.engineer, method: "POST", body });
    expect(first.status).toBe(201);
    const second = await api("/api/uploads/complete", { cookie: c.engineer, method: "POST", body });
    expect(second.status).toBe(409);
    expect(second.body.error.message).toMatch(/already complete/);
    expect(
      await testDb.selectFrom("transfers").select("id").where("upload_id", "=", uploadId).execute(),
    ).toEqual([{ id: first.body.transferId }]);
    expect(await storedSha256(key)).toBe(sha256Of(bytes));
    const cancel = await api("/api/uploads/abort", {
      cookie: c.engineer,
      method: "POST",
      body: { uploadId },
    });
    expect(cancel.status).toBe(409);
    expect(await objectExists(key)).toBe(true);
  });

  it("two completions sent at once: exactly one proceeds and records a transfer, the other answers 409", async () => {
    const sideId = own[5];
    const bytes = flatTransfer(2, 27);
    const { uploadId, partSize, urls } = await startUpload(c.engineer, sideId, "race.wav", bytes.length);
    const parts = await sendParts(bytes, partSize, urls);
    const body = { uploadId, parts, sha256: sha256Of(bytes), bytes: bytes.length, ...transferDetails };
    const answers = await Promise.all(
      [1, 2, 3].map(() => api("/api/uploads/complete", { cookie: c.engineer, method: "POST", body })),
    );
    expect(answers.map((a) => a.status).sort()).toEqual([201, 409, 409]);
    expect(
      await testDb.selectFrom("transfers").select("id").where("upload_id", "=", uploadId).execute(),
    ).toHaveLength(1);
    expect(await uploadState(uploadId)).toBe("completed");
  });

  it("the database refuses a second transfer from one upload, a transfer whose object is not its upload's, and an unknown upload state", async () => {
    const t = await testDb
      .selectFrom("transfers")
      .selectAll()
      .where("side_id", "=", victim.sideId)
      .executeTakeFirstOrThrow();
    const { id: _id, created_at: _c, ...copy } = t;
    const again = {
      ...copy,
      bext: t.bext === null ? null : JSON.stringify(t.bext),
      measured_speed_rpm: t.measured_speed_rpm === null ? null : Number(t.measured_speed_rpm),
    };
    await expect(
      testDb
        .insertInto("transfers")
        .values({ ...again, object_key: `${t.object_key}.copy` })
        .execute(),
    ).rejects.toThrow(/transfers_upload_once/);
    // A refused upload of the engineer's own, named for the victim's object.
    const refused = await testDb
      .selectFrom("uploads")
      .select(["id", "side_id"])
      .where("state", "=", "refused")
      .executeTakeFirstOrThrow();
    await expect(
      testDb
        .insertInto("transfers")
        .values({
          ...again,
          upload_id: refused.id,
          side_id: refused.side_id,
          object_key: `${t.object_key}.claimed`,
        })
        .execute(),
    ).rejects.toThrow(/transfers_upload_fk/);
    await expect(
      sql`UPDATE uploads SET state = 'done' WHERE id = ${t.upload_id}`.execute(testDb),
    ).rejects.toThrow(/uploads_state/);
    await expect(
      sql`UPDATE uploads SET object_key = ${victim.key}, state = 'open', finished_at = NULL WHERE id = ${refused.id}`.execute(
        testDb,
      ),
    ).rejects.toThrow(/uploads_key|uploads_object_key/);
  });

  it("odd ids (dashes, not a uuid) answer 422 with a field error, not 500; an unknown upload answers 404", async () => {
    const dashes = "------------------------------------";
    const signed = await api("/api/uploads/parts", {
      cookie: c.engineer,
      method: "POST",
      body: { key: dashes, uploadId: dashes, partNumbers: [1] },
    });
    const listed = await api(`/api/uploads?uploadId=${dashes}&key=${dashes}`, { cookie: c.engineer });
    const completed = await api("/api/uploads/complete", {
      cookie: c.engineer,
      method: "POST",
      body: {
        key: dashes,
        uploadId: dashes,
        parts: [{ partNumber: 1, etag: "x" }],
        sha256: "0".repeat(64),
        bytes: 1,
      },
    });
    const aborted = await api("/api/uploads/abort", {
      cookie: c.engineer,
      method: "POST",
      body: { uploadId: dashes },
    });
    const started = await api("/api/uploads", {
      cookie: c.engineer,
      method: "POST",
      body: { sideId: dashes, fileName: "a.wav", bytes: 10 },
    });
    for (const [r, field] of [
      [signed, "uploadId"],
      [listed, "uploadId"],
      [completed, "uploadId"],
      [aborted, "uploadId"],
      [started, "sideId"],
    ] as const) {
      expect(r.status).toBe(422);
      expect(r.body.error.fields[field]).toBeDefined();
    }
    const unknown = await api("/api/uploads/parts", {
      cookie: c.engineer,
      method: "POST",
      body: { uploadId: "00000000-0000-4000-8000-000000000000", partNumbers: [1] },
    });
    expect(unknown.status).toBe(404);
    const controlName = await api("/api/uploads", {
      cookie: c.engineer,
      method: "POST",
      body: { sideId: own[6], fileName: "a\r\nb.wav", bytes: 10 },
    });
    expect(controlName.status).toBe(422);
    expect(controlName.body.error.fields.fileName).toBeDefined();
  });

  it("an expired upload is refused and cancelled, with what it stored dropped", async () => {
    const bytes = flatTransfer(1, 1028);
    const { uploadId, partSize, urls, key } = await startUpload(c.engineer, own[6], "late.wav", bytes.length);
    const parts = await sendParts(bytes, partSize, urls);
    await testDb
      .updateTable("uploads")
      .set({ created_at: sql`now() - interval '2 days'`, expires_at: sql`now() - interval '1 day'` })
      .where("id", "=", uploadId)
      .execute();
    const signed = await api("/api/uploads/parts", {
      cookie: c.engineer,
      method: "POST",
      body: { uploadId, partNumbers: [1] },
    });
    expect(signed.status).toBe(410);
    expect(signed.body.error.message).toMatch(/expired/);
    const done = await api("/api/uploads/complete", {
      cookie: c.engineer,
      method: "POST",
      body: { uploadId, parts, sha256: sha256Of(bytes), bytes: bytes.length, ...transferDetails },
    });
    expect(done.status).toBe(409);
    expect(done.body.error.message).toMatch(/cancelled \(expired\)/);
    expect(await uploadState(uploadId)).toBe("aborted");
    expect(await objectExists(key)).toBe(false);
  });

  it("a completion the storage cannot carry out answers a clear error, not 500, and the same upload completes when the storage is back", async () => {
    const sideId = own[7];
    const bytes = flatTransfer(1, 1029);
    const { uploadId, partSize, urls } = await startUpload(c.engineer, sideId, "early.wav", bytes.length);
    const parts = await sendParts(bytes, partSize, urls);
    const body = { uploadId, parts, sha256: sha256Of(bytes), bytes: bytes.length, ...transferDetails };
    // The storage loses track of the upload for a while (s3rver answers 500 where S3 answers 404, NoSuchUpload).
    const { storage_upload_id: real } = await testDb
      .selectFrom("uploads")
      .select("storage_upload_id")
      .where("id", "=", uploadId)
      .executeTakeFirstOrThrow();
    await testDb
      .updateTable("uploads")
      .set({ storage_upload_id: "0".repeat(32) })
      .where("id", "=", uploadId)
      .execute();
    const lost = await api("/api/uploads/complete", { cookie: c.engineer, method: "POST", body });
    expect(lost.status).toBe(503);
    expect(lost.body.error).toMatchObject({
      code: "unavailable",
      // A 5xx is a store that cannot serve now (lib/storage/errors.ts): the browser's upload waits it out.
      message: expect.stringMatching(
        /^The lab's file store cannot be reached just now, so it could not put the uploaded parts together/,
      ),
      details: { store: "unreachable" },
    });
    expect(await uploadState(uploadId)).toBe("open");

    await testDb.updateTable("uploads").set({ storage_upload_id: real }).where("id", "=", uploadId).execute();
    const done = await api("/api/uploads/complete", { cookie: c.engineer, method: "POST", body });
    expect(done.status).toBe(201);
  });
});

describe("download names", () => {
  it("a download file name from a shelf mark with CR LF and quotes is safe: the link works and its name cannot split the header", async () => {
    const [sideId] = (await assignedDisc(c, `SS-DL-${tag}`, ["A"])).sideIds;
    await chooseCurve(c, [sideId]);
    const up = await uploadTransfer(c, sideId, flatTransfer(1, 30), "plain.wav");
    expect(up.done.status).toBe(201);
    const render = await renderAndWait(c, sideId);
    const discId = (
      await testDb.selectFrom("sides").select("disc_id").where("id", "=", sideId).executeTakeFirstOrThrow()
    ).disc_id;
    const hostile = `SS-${tag}\r\nSet-Cookie: stolen=1; "quoted" \\ Pathé`;
    await testDb.updateTable("discs").set({ shelf_mark: hostile }).where("id", "=", discId).execute();
    await testDb
      .updateTable("transfers")
      .set({ file_name: `flat\r\n"${tag}".wav` })
      .where("id", "=", up.done.body.transferId)
      .execute();

    for (const path of [
      `/api/renders/${render.id}/download`,
      `/api/transfers/${up.done.body.transferId}/download`,
    ]) {
      const link = await fetch(`${appUrl}${path}`, { headers: { cookie: c.curator }, redirect: "manual" });
      expect(link.status).toBe(302);
      const location = link.headers.get("location")!;
      const asked = new URL(location).searchParams.get("response-content-disposition")!;
      expect(asked).not.toMatch(/[\r\n]/);
      const file = await fetch(location);
      expect(file.status).toBe(200);
      const disposition = file.headers.get("content-disposition")!;
      expect(file.headers.get("set-cookie")).toBeNull();
      const m = /^attachment; filename="([^"\\]*)"; filename\*=UTF-8''([^\s;"]+)$/.exec(disposition);
      expect(m, disposition).not.toBeNull();
      const full = decodeURIComponent(m![2]);
      expect(full).not.toMatch(/[\r\n]/);
      if (path.includes("renders")) {
        expect(m![1]).toMatch(
          new RegExp(`^SS-${tag} Set-Cookie_ stolen=1_ _quoted_ _ Pathe-A-access\\.wav$`),
        );
        expect(full).toBe(`SS-${tag} Set-Cookie: stolen=1; "quoted" _ Pathé-A-access.wav`);
      } else {
        expect(full).toBe(`flat "${tag}".wav`);
      }
    }
  }, 120_000);
});
