import { execFile } from 'node:child_process'
import crypto from 'node:crypto'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { promisify } from 'node:util'
import forge from 'node-forge'
import { PDFDocument } from 'pdf-lib'
import { pdflibAddPlaceholder } from '@signpdf/placeholder-pdf-lib'
import { P12Signer } from '@signpdf/signer-p12'
import { SignPdf } from '@signpdf/signpdf'

/** The organisation's signing identity: a PKCS#12 bundle and its passphrase, with what the certificate says. */
export interface OrganisationSigner {
  p12: Buffer
  passphrase: string
  /** Where the bundle was read from (or written to). */
  p12Path: string
  /** The certificate's common name, e.g. "Tallowmere Commissioning Group report seal". */
  commonName: string
  organizationName: string | null
  /** SHA-256 of the certificate's DER, hex, colon-free: what a reader shows as its fingerprint. */
  fingerprintSha256: string
  notBefore: Date
  notAfter: Date
  /** True when the certificate signed itself (the demo), false for one issued by a certificate authority. */
  selfSigned: boolean
  /** True when this call created the certificate. */
  created: boolean
}

export interface CertificateOptions {
  /** Organisation named in a certificate created here (default "Startproof demo organisation"). */
  organizationName?: string
  /** Years a created certificate is valid (default 5). */
  validYears?: number
}

const P12_FILE = 'organisation-seal.p12'
const PASSPHRASE_FILE = 'organisation-seal.passphrase'

function describe(p12: Buffer, passphrase: string, p12Path: string, created: boolean): OrganisationSigner {
  let parsed: forge.pkcs12.Pkcs12Pfx
  try {
    parsed = forge.pkcs12.pkcs12FromAsn1(forge.asn1.fromDer(forge.util.createBuffer(p12.toString('binary'))), false, passphrase)
  } catch (err) {
    throw new Error(`The signing certificate ${p12Path} cannot be opened: ${(err as Error).message} (wrong passphrase or not a PKCS#12 file)`)
  }
  const certs = (parsed.getBags({ bagType: forge.pki.oids.certBag })[forge.pki.oids.certBag] ?? []).map((b) => b.cert).filter((c): c is forge.pki.Certificate => Boolean(c))
  const keys = parsed.getBags({ bagType: forge.pki.oids.pkcs8ShroudedKeyBag })[forge.pki.oids.pkcs8ShroudedKeyBag] ?? []
  const key = keys[0]?.key as forge.pki.rsa.PrivateKey | undefined
  if (!key) throw new Error(`The signing certificate ${p12Path} holds no private key`)
  const cert = certs.find((c) => {
    const pub = c.publicKey as forge.pki.rsa.PublicKey
    return pub.n?.compareTo(key.n) === 0 && pub.e?.compareTo(key.e) === 0
  })
  if (!cert) throw new Error(`The signing certificate ${p12Path} holds no certificate that matches its private key`)
  const der = forge.asn1.toDer(forge.pki.certificateToAsn1(cert)).getBytes()
  const field = (name: string) => (cert.subject.getField(name)?.value as string | undefined) ?? null
  return {
    p12,
    passphrase,
    p12Path,
    commonName: field('CN') ?? '',
    organizationName: field('O'),
    fingerprintSha256: crypto.createHash('sha256').update(Buffer.from(der, 'binary')).digest('hex'),
    notBefore: cert.validity.notBefore,
    notAfter: cert.validity.notAfter,
    selfSigned: cert.isIssuer(cert),
    created,
  }
}

/** A self-signed RSA-2048 certificate for sealing reports, with its key, as a passphrase-protected PKCS#12 bundle. */
export function createSelfSignedP12(passphrase: string, options: CertificateOptions = {}): Buffer {
  const organization = options.organizationName ?? 'Startproof demo organisation'
  const { privateKey, publicKey } = crypto.generateKeyPairSync('rsa', { modulusLength: 2048 })
  const key = forge.pki.privateKeyFromPem(privateKey.export({ type: 'pkcs1', format: 'pem' }).toString())
  const cert = forge.pki.createCertificate()
  cert.publicKey = forge.pki.publicKeyFromPem(publicKey.export({ type: 'spki', format: 'pem' }).toString())
  cert.serialNumber = `01${crypto.randomBytes(15).toString('hex')}`
  const now = new Date()
  cert.validity.notBefore = new Date(now.getTime() - 60_000)
  cert.validity.notAfter = new Date(now.getTime())
  cert.validity.notAfter.setFullYear(now.getFullYear() + (options.validYears ?? 5))
  const subject = [
    { name: 'commonName', value: `${organization} report seal` },
    { name: 'organizationName', value: organization },
  ]
  cert.setSubject(subject)
  cert.setIssuer(subject)
  cert.setExtensions([
    { name: 'basicConstraints', cA: false },
    { name: 'keyUsage', digitalSignature: true, nonRepudiation: true },
    { name: 'extKeyUsage', emailProtection: true },
    { name: 'subjectKeyIdentifier' },
  ])
  cert.sign(key, forge.md.sha256.create())
  const asn1 = forge.pkcs12.toPkcs12Asn1(key, [cert], passphrase, { algorithm: '3des', friendlyName: `${organization} report seal` })
  return Buffer.from(forge.asn1.toDer(asn1).getBytes(), 'binary')
}

function sleep(ms: number) {
  return new Promise((resolve) => setTimeout(resolve, ms))
}

/**
 * The organisation's signing identity. Given a folder, it is the bundle kept there, created on first use as a
 * self-signed RSA-2048 certificate with a random passphrase beside it (readable by the owner only); given
 * `{ p12Path, passphrase }` (production), it is that bundle, checked to open and to hold a matching key.
 */
export async function ensureOrganisationCertificate(source: string | { p12Path: string; passphrase: string }, options: CertificateOptions = {}): Promise<OrganisationSigner> {
  if (typeof source !== 'string') {
    if (!fs.existsSync(source.p12Path)) throw new Error(`The signing certificate ${source.p12Path} does not exist`)
    return describe(fs.readFileSync(source.p12Path), source.passphrase, source.p12Path, false)
  }
  const dir = path.resolve(source)
  fs.mkdirSync(dir, { recursive: true, mode: 0o700 })
  const p12Path = path.join(dir, P12_FILE)
  const passphrasePath = path.join(dir, PASSPHRASE_FILE)
  const lockPath = path.join(dir, `${P12_FILE}.lock`)
  const existing = () => (fs.existsSync(p12Path) && fs.existsSync(passphrasePath) ? describe(fs.readFileSync(p12Path), fs.readFileSync(passphrasePath, 'utf8').trim(), p12Path, false) : null)

  // Several workers may start at once: one creates the bundle under an exclusive lock file, the others wait for it.
  for (let waited = 0; ; waited += 100) {
    const found = existing()
    if (found) return found
    let lock: number | null = null
    try {
      lock = fs.openSync(lockPath, 'wx', 0o600)
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== 'EEXIST') throw err
      const stat = fs.statSync(lockPath, { throwIfNoEntry: false })
      if (stat && Date.now() - stat.mtimeMs > 60_000) fs.rmSync(lockPath, { force: true })
      else if (waited > 65_000) throw new Error(`Timed out waiting for ${lockPath} to be released`)
      await sleep(100)
      continue
    }
    try {
      const again = existing()
      if (again) return again
      const passphrase = crypto.randomBytes(24).toString('base64url')
      const p12 = createSelfSignedP12(passphrase, options)
      fs.writeFileSync(`${passphrasePath}.tmp`, `${passphrase}\n`, { mode: 0o600 })
      fs.writeFileSync(`${p12Path}.tmp`, p12, { mode: 0o600 })
      fs.renameSync(`${passphrasePath}.tmp`, passphrasePath)
      fs.renameSync(`${p12Path}.tmp`, p12Path)
      return describe(p12, passphrase, p12Path, true)
    } finally {
      fs.closeSync(lock)
      fs.rmSync(lockPath, { force: true })
    }
  }
}

export interface SealOptions {
  /** Why the document is signed, shown by PDF readers (default "Start-up report issued and sealed"). */
  reason?: string
  /** The signer's name in the signature dictionary (default the certificate's organisation). */
  name?: string
  location?: string
  contactInfo?: string
  signingTime?: Date
}

/**
 * The PDF with a PKCS#7 detached signature (adbe.pkcs7.detached, SHA-256) by the organisation's certificate over
 * the whole file but the signature itself: any change to the covered bytes makes readers report it as altered.
 */
export async function sealPdf(pdf: Buffer, signer: Pick<OrganisationSigner, 'p12' | 'passphrase'> & Partial<OrganisationSigner>, options: SealOptions = {}): Promise<Buffer> {
  const doc = await PDFDocument.load(pdf, { updateMetadata: false })
  pdflibAddPlaceholder({
    pdfDoc: doc,
    reason: options.reason ?? 'Start-up report issued and sealed',
    contactInfo: options.contactInfo ?? '',
    name: options.name ?? signer.organizationName ?? signer.commonName ?? 'Startproof',
    location: options.location ?? '',
    signingTime: options.signingTime,
    signatureLength: 8192,
    appName: 'Startproof',
  })
  const prepared = Buffer.from(await doc.save({ useObjectStreams: false }))
  return new SignPdf().sign(prepared, new P12Signer(signer.p12, { passphrase: signer.passphrase }), options.signingTime)
}

export interface SealVerification {
  /** pdfsig found a signature. */
  signed: boolean
  /** The signature matches the signed bytes ("Signature is Valid"). */
  valid: boolean
  /** The signed bytes were changed ("Digest Mismatch"). */
  altered: boolean
  /** The signature covers the whole file. */
  coversWholeDocument: boolean
  signerCommonName: string | null
  signingTime: string | null
  /** What pdfsig said about the certificate ("Certificate issuer is unknown." for a self-signed one). */
  certificateStatus: string | null
  /** pdfsig's output, for logs. */
  report: string
}

const run = promisify(execFile)

/** Checks a sealed PDF with poppler's `pdfsig` (installed with poppler-utils) and reads its verdict. */
export async function verifySealedPdf(pdf: Buffer, options: { pdfsigPath?: string } = {}): Promise<SealVerification> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-verify-'))
  const file = path.join(dir, 'report.pdf')
  try {
    fs.writeFileSync(file, pdf)
    let report: string
    try {
      report = (await run(options.pdfsigPath ?? 'pdfsig', [file], { encoding: 'utf8' })).stdout
    } catch (err) {
      // pdfsig exits non-zero for an invalid or missing signature and still prints its findings.
      const e = err as { stdout?: string; stderr?: string; code?: unknown }
      if (typeof e.code === 'string') throw err
      report = `${e.stdout ?? ''}${e.stderr ?? ''}`
    }
    const line = (label: RegExp) => report.match(label)?.[1]?.trim() ?? null
    const validation = line(/Signature Validation:\s*(.+)/)
    return {
      signed: /Signature #1/.test(report),
      valid: validation === 'Signature is Valid.',
      altered: /Digest Mismatch/i.test(validation ?? ''),
      coversWholeDocument: /Total document signed/i.test(report),
      signerCommonName: line(/Signer Certificate Common Name:\s*(.+)/),
      signingTime: line(/Signing Time:\s*(.+)/),
      certificateStatus: line(/Certificate Validation:\s*(.+)/),
      report,
    }
  } finally {
    fs.rmSync(dir, { recursive: true, force: true })
  }
}
