// Copy-paste examples for researchers (the /dataset page shows them; tests run the shell ones against the
// real hub, so what the page says works). `origin` is the hub, `version` a published release.

export interface DatasetExample {
	id: string;
	title: string;
	language: 'sh' | 'r' | 'python' | 'js';
	code: string;
}

export function liveExamples(origin: string): DatasetExample[] {
	return [
		{
			id: 'curl-live',
			title: 'curl: the live dataset as CSV',
			language: 'sh',
			code: `export RUNNEL_TOKEN=rnl_…   # a personal API token with the dataset:read scope
curl -fsS -H "Authorization: Bearer $RUNNEL_TOKEN" \\
  "${origin}/api/v1/dataset/records?fy=2026&practice=605&format=csv" -o dataset-live.csv`
		},
		{
			id: 'r-live',
			title: 'R (httr2)',
			language: 'r',
			code: `library(httr2)
resp <- request("${origin}/api/v1/dataset/records") |>
  req_url_query(fy = 2026, format = "csv") |>
  req_auth_bearer_token(Sys.getenv("RUNNEL_TOKEN")) |>
  req_retry(max_tries = 3) |>   # waits out a 429 (Retry-After)
  req_perform(path = "dataset-live.csv")
d <- read.csv("dataset-live.csv", colClasses = c(county_fips = "character", huc8 = "character", practice_code = "character"))`
		},
		{
			id: 'python-live',
			title: 'Python (standard library; pandas optional)',
			language: 'python',
			code: `import csv, io, os, urllib.request
req = urllib.request.Request(
    "${origin}/api/v1/dataset/records?fy=2026&format=csv",
    headers={"Authorization": "Bearer " + os.environ["RUNNEL_TOKEN"]},
)
with urllib.request.urlopen(req) as resp:
    rows = list(csv.DictReader(io.TextIOWrapper(resp, encoding="utf-8")))
# or: pandas.read_csv(io.TextIOWrapper(resp, encoding="utf-8"), dtype={"county_fips": str, "huc8": str})`
		}
	];
}

export function releaseExamples(origin: string, version: string): DatasetExample[] {
	return [
		{
			id: 'curl-release',
			title: `curl: download release ${version}`,
			language: 'sh',
			code: `V=${version}; mkdir -p runnel-dataset-$V && cd runnel-dataset-$V
for f in $(curl -fsS -H "Authorization: Bearer $RUNNEL_TOKEN" "${origin}/api/v1/dataset/releases/$V/files/manifest.json" \\
           | grep -o '"name": *"[^"]*"' | cut -d'"' -f4) manifest.json manifest.jws; do
  curl -fsS -H "Authorization: Bearer $RUNNEL_TOKEN" "${origin}/api/v1/dataset/releases/$V/files/$f" -o "$f"
done
curl -fsS "${origin}/.well-known/jwks.json" -o jwks.json`
		},
		{
			id: 'runnel-verify',
			title: 'Verify with the runnel CLI',
			language: 'sh',
			code: `runnel release verify . --jwks jwks.json       # the downloaded folder, offline
runnel release verify ${version}                      # or straight from the hub`
		},
		{
			id: 'openssl-verify',
			title: 'Verify with openssl (ES256 signature, then every SHA-256)',
			language: 'sh',
			code: `b64url() { local s; s=$(printf %s "$1" | tr '_-' '/+'); while [ $(( \${#s} % 4 )) -ne 0 ]; do s="$s="; done; printf %s "$s" | base64 -d; }
KID=$(b64url "$(cut -d. -f1 manifest.jws)" | jq -r .kid)
X=$(b64url "$(jq -r --arg k "$KID" '.keys[] | select(.kid == $k) | .x' jwks.json)" | xxd -p | tr -d '\\n')
Y=$(b64url "$(jq -r --arg k "$KID" '.keys[] | select(.kid == $k) | .y' jwks.json)" | xxd -p | tr -d '\\n')
# the P-256 public key as DER (SubjectPublicKeyInfo prefix + 04 || x || y)
printf '3059301306072a8648ce3d020106082a8648ce3d03010703420004%s%s' "$X" "$Y" | xxd -r -p > hub-key.der
# the JWS signature is r || s (32 bytes each); openssl wants it as DER
SIG=$(b64url "$(cut -d. -f3 manifest.jws)" | xxd -p | tr -d '\\n')
der_int() { local h=$1; while [ "\${h:0:2}" = 00 ] && [ \${#h} -gt 2 ]; do h=\${h:2}; done
  [ $((16#\${h:0:2})) -ge 128 ] && h=00$h; printf '02%02x%s' $(( \${#h} / 2 )) "$h"; }
BODY=$(der_int "\${SIG:0:64}")$(der_int "\${SIG:64:64}")
printf '30%02x%s' $(( \${#BODY} / 2 )) "$BODY" | xxd -r -p > manifest.sig
printf %s "$(cut -d. -f1,2 manifest.jws)" > signing-input
# the signed payload is the manifest; check the signature, every file, and that manifest.json is that payload
b64url "$(cut -d. -f2 manifest.jws)" > signed-manifest.json
openssl dgst -sha256 -verify hub-key.der -keyform DER -signature manifest.sig signing-input &&
  jq -r '.files[] | "\\(.sha256)  \\(.name)"' signed-manifest.json | sha256sum -c - &&
  cmp signed-manifest.json manifest.json && echo "release verified: signature, every file, manifest.json"`
		},
		{
			id: 'jose-verify',
			title: 'Verify with Node.js and jose',
			language: 'js',
			code: `// npm install jose ; node verify.mjs   (in the release folder)
import { readFileSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { compactVerify, createLocalJWKSet } from 'jose';
const keys = createLocalJWKSet(JSON.parse(readFileSync('jwks.json', 'utf8')));
const { payload } = await compactVerify(readFileSync('manifest.jws', 'utf8').trim(), keys, { algorithms: ['ES256'] });
let ok = true;
for (const f of JSON.parse(new TextDecoder().decode(payload)).files) {
  const same = createHash('sha256').update(readFileSync(f.name)).digest('hex') === f.sha256;
  console.log(same ? 'ok ' : 'BAD', f.name);
  ok &&= same;
}
process.exit(ok ? 0 : 1);`
		}
	];
}
