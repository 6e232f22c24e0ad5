/**
 * Runs in the S3 fake's child process (see s3-fake.ts), after `server` (an S3rver, a Koa app) is
 * made and before it listens. s3rver 3.7 creates, fills and completes multipart uploads but
 * does not answer ListParts, AbortMultipartUpload or ListMultipartUploads, which resumable
 * uploads on S3 need (how far an upload got; cancelling one; finding expired ones). These three
 * are answered here from s3rver's own record of an upload in progress (a folder per upload id
 * holding its key and one file per part), in the shapes of the S3 API reference: ListParts and
 * ListMultipartUploads as XML results, AbortMultipartUpload as 204, and NoSuchUpload (404) for an
 * upload id it does not hold. Paging is not needed at the sizes the tests use: every list is
 * answered whole (IsTruncated false).
 */
export const multipartApiScript = `
(() => {
  const fs = require('node:fs');
  const path = require('node:path');
  const xml = (s) => String(s).replace(/[<>&'"]/g, (c) => ({ '<': '&lt;', '>': '&gt;', '&': '&amp;', "'": '&apos;', '"': '&quot;' })[c]);
  const uploadsDir = (bucket) => server.store.getResourcePath(bucket, undefined, 'uploads');
  const noSuchUpload = (ctx, uploadId) => {
    ctx.status = 404;
    ctx.type = 'application/xml';
    ctx.body = '<?xml version="1.0" encoding="UTF-8"?>\\n<Error><Code>NoSuchUpload</Code><Message>The specified upload does not exist.</Message><UploadId>' + xml(uploadId) + '</UploadId></Error>';
  };
  server.middleware.unshift(async (ctx, next) => {
    const parts = ctx.path.split('/').filter(Boolean).map(decodeURIComponent);
    const bucket = parts[0];
    const key = parts.slice(1).join('/');
    const q = ctx.query;
    if (!bucket) return next();
    if (ctx.method === 'GET' && !key && 'uploads' in q) {
      const dir = uploadsDir(bucket);
      const ids = fs.existsSync(dir) ? fs.readdirSync(dir) : [];
      const prefix = q.prefix || '';
      const uploads = ids
        .map((id) => {
          const keyFile = path.join(dir, id, 'key');
          if (!fs.existsSync(keyFile)) return null;
          return { id, key: fs.readFileSync(keyFile, 'utf8'), initiated: fs.statSync(keyFile).mtime };
        })
        .filter((u) => u && u.key.startsWith(prefix))
        .sort((a, b) => (a.key < b.key ? -1 : a.key > b.key ? 1 : 0));
      ctx.type = 'application/xml';
      ctx.body = '<?xml version="1.0" encoding="UTF-8"?>\\n<ListMultipartUploadsResult><Bucket>' + xml(bucket) + '</Bucket><KeyMarker></KeyMarker><UploadIdMarker></UploadIdMarker><Prefix>' + xml(prefix) + '</Prefix><IsTruncated>false</IsTruncated>'
        + uploads.map((u) => '<Upload><Key>' + xml(u.key) + '</Key><UploadId>' + xml(u.id) + '</UploadId><Initiated>' + u.initiated.toISOString() + '</Initiated><StorageClass>STANDARD</StorageClass></Upload>').join('')
        + '</ListMultipartUploadsResult>';
      return;
    }
    if (!key || !('uploadId' in q) || (ctx.method !== 'GET' && ctx.method !== 'DELETE')) return next();
    const uploadId = String(q.uploadId);
    const dir = path.join(uploadsDir(bucket), path.basename(uploadId));
    const keyFile = path.join(dir, 'key');
    if (!fs.existsSync(keyFile) || fs.readFileSync(keyFile, 'utf8') !== key) return noSuchUpload(ctx, uploadId);
    if (ctx.method === 'DELETE') {
      fs.rmSync(dir, { recursive: true, force: true });
      ctx.status = 204;
      return;
    }
    const numbers = fs.readdirSync(dir).filter((f) => /^\\d+$/.test(f)).map(Number).sort((a, b) => a - b);
    ctx.type = 'application/xml';
    ctx.body = '<?xml version="1.0" encoding="UTF-8"?>\\n<ListPartsResult><Bucket>' + xml(bucket) + '</Bucket><Key>' + xml(key) + '</Key><UploadId>' + xml(uploadId) + '</UploadId><IsTruncated>false</IsTruncated>'
      + numbers.map((n) => {
          const file = path.join(dir, String(n));
          const md5 = fs.existsSync(file + '.md5') ? fs.readFileSync(file + '.md5', 'utf8') : '';
          const st = fs.statSync(file);
          return '<Part><PartNumber>' + n + '</PartNumber><LastModified>' + st.mtime.toISOString() + '</LastModified><ETag>"' + md5 + '"</ETag><Size>' + st.size + '</Size></Part>';
        }).join('')
      + '</ListPartsResult>';
  });
})();
`;
