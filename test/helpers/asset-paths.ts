// Request paths (as sent, still percent-encoded) that no shell may serve a file for: each tries to
// leave the page's folder or reach a hidden file, by dot-segments, encoded slashes or backslashes,
// NUL, or bad encoding. The page's folder holds index.html and a hidden .env; secret.txt lies
// beside it.
export const refusedAssetPaths: readonly string[] = [
  '/../secret.txt',
  '/%2e%2e/secret.txt',
  '/%2E%2E%2Fsecret.txt',
  '/..%2fsecret.txt',
  '/%2fetc%2fpasswd',
  '/..%5csecret.txt',
  '/%5c..%5csecret.txt',
  '/sub/../../secret.txt',
  '/sub/%2e%2e/%2e%2e/secret.txt',
  '/.env',
  '/%2eenv',
  '/./.env',
  '/index.html%00.png',
  '/index.html%00',
  '/%E0%A4%A',
  '//etc/passwd',
];
