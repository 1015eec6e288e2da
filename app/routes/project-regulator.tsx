// The review desk (design §7): the conflict table, lease-block figures, exclusion and mitigation
// zones and the reviewer's exclusion buffers, all read from one full-resolution scoring of the
// adopted weight-set version (or a chosen published scoring). Tables are the page; the map workspace
// draws the same assets and blocks.
import { Form, Link, useActionData, useNavigation, useSearchParams } from "react-router";
import { useMemo, useState } from "react";
import { requireProjectAccess } from "~/permissions.server";
import { can } from "~/permissions";
import {
  blockFigures,
  classificationOf,
  conflictTable,
  deskMapLegend,
  exclusionBuffersSchema,
  exclusionZones,
  getExclusionSettings,
  mitigationZones,
  scoringParam,
  setExclusionSettings,
} from "~/regulator.server";
import { listScorings } from "~/scorings.server";
import { UserError } from "~/errors";
import { formAction, parseForm } from "~/route-helpers.server";
import { refusal } from "~/security.server";
import { Cautions } from "~/components/Cautions";
import { FormProblemNote, PrimaryButton } from "~/components/forms/Field";
import type { Route } from "./+types/project-regulator";

export const meta = () => [{ title: "Review desk · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "project.read");
  const url = new URL(request.url);
  const viewer = { userId: identity.user.id, role };
  const settings = await getExclusionSettings(project.id);
  const published = (await listScorings(project.id)).filter((s) => s.effectiveStatus === "published").map((s) => ({ id: s.id, label: `${s.version.setName} v${s.version.number} · ${s.target && (s.target as { kind: string }).kind === "age" ? `${(s.target as { ageKa: number }).ageKa} ka` : `period ${(s.target as { name?: string }).name ?? ""}`} · scoring ${s.id}` }));
  const exclusions = await exclusionZones(project.id, { viewer });
  let desk: null | {
    conflicts: Awaited<ReturnType<typeof conflictTable>>;
    blocks: Awaited<ReturnType<typeof blockFigures>>;
    mitigation: { measure: string; label: string; basis: string; areaKm2: number; cells: number }[];
    mitigationNotes: string[];
  } = null;
  let missing: string | null = null;
  try {
    const scoringId = scoringParam(url.searchParams.get("scoring"));
    const conflicts = await conflictTable(project.id, { scoringId, viewer });
    const blocks = await blockFigures(project.id, { scoringId, viewer });
    const mz = await mitigationZones(project.id, { scoringId, viewer });
    desk = {
      conflicts,
      blocks,
      mitigation: mz.features.map((f) => ({ measure: String(f.properties.measure), label: String(f.properties.label), basis: String(f.properties.basis), areaKm2: Number(f.properties.areaKm2), cells: Number(f.properties.cells) })),
      mitigationNotes: mz.notes,
    };
  } catch (e) {
    if (!(e instanceof UserError)) throw e;
    missing = e.message;
  }
  return {
    projectId: project.id,
    mayRunScorings: can(role, "runs.start"),
    mayEditBuffers: can(role, "reviews.sign") || can(role, "project.edit"),
    settings,
    published,
    desk,
    legend: desk ? deskMapLegend(classificationOf(project.classification)) : null,
    missing,
    exclusions: {
      notes: exclusions.notes,
      sitesRule: exclusions.sitesRule,
      zones: exclusions.features.map((f) => ({
        kind: String(f.properties.featureKind),
        kindLabel: String(f.properties.featureKindLabel),
        label: String(f.properties.label),
        source: String(f.properties.source),
        positionUncertaintyM: Number(f.properties.positionUncertaintyM),
        bufferM: Number(f.properties.bufferM),
        distanceM: Number(f.properties.distanceM),
        areaKm2: Number(f.properties.areaKm2),
      })),
    },
  };
}

export async function action({ request, params, context }: Route.ActionArgs) {
  const { project, role, identity } = await requireProjectAccess(request, params.projectId, "project.read");
  // No capability of its own in permissions.ts: reviewers (reviews.sign) or leads and owners (project.edit).
  if (!can(role, "reviews.sign") && !can(role, "project.edit")) throw refusal(request, 403, "role_may_not", "Only the project's reviewers, leads and owners may set exclusion buffers.");
  const form = await request.formData();
  return formAction(async () => {
    const raw: Record<string, number> = {};
    for (const k of ["wreck", "anomaly", "find_spot"]) {
      const v = String(form.get(k) ?? "").trim();
      if (v !== "") raw[k] = /^-?\d+(\.\d+)?$/.test(v) ? Number(v) : NaN;
    }
    const body = parseForm(exclusionBuffersSchema, raw);
    if (Object.values(body).some((v) => Number.isNaN(v))) throw new UserError(422, "invalid_fields", "Each buffer must be a number of metres.");
    const settings = await setExclusionSettings(project.id, identity.user.id, body, { clientAddress: context?.clientAddress });
    return { saved: true as const, buffersM: settings.buffersM };
  });
}

const pct = (v: number | null | undefined) => (v === null || v === undefined ? "–" : `${(v * 100).toFixed(v > 0 && v < 0.01 ? 1 : 0)} %`);
const num = (v: number | null | undefined, d = 2) => (v === null || v === undefined ? "–" : v.toFixed(d));

type ConflictRow = NonNullable<Route.ComponentProps["loaderData"]["desk"]>["conflicts"]["rows"][number];
type SortKey = "assetId" | "impactDepthM" | "depthMin" | "unassessedShare" | "reach" | "highestClassIndex" | "mitigation";
const REACH_ORDER: Record<string, number> = { reaches: 0, may_reach: 1, unassessed: 2, stays_above: 3 };
const MITIGATION_ORDER: Record<string, number> = { targeted_survey: 0, coring: 1, watching_brief: 2, finds_protocol: 3 };

function sortValue(r: ConflictRow, key: SortKey): number | string {
  switch (key) {
    case "assetId": return r.assetId;
    case "impactDepthM": return r.impactDepthM;
    case "depthMin": return r.depthToHorizonM.min ?? Infinity;
    case "unassessedShare": return r.unassessedShare;
    case "reach": return REACH_ORDER[r.reach] ?? 9;
    case "highestClassIndex": return r.highestClassIndex ?? 99;
    case "mitigation": return MITIGATION_ORDER[r.mitigation.id] ?? 9;
  }
}

function ConflictTable({ rows, labels }: { rows: ConflictRow[]; labels: string[] }) {
  const [sort, setSort] = useState<{ key: SortKey; dir: 1 | -1 }>({ key: "mitigation", dir: 1 });
  const sorted = useMemo(
    () =>
      [...rows].sort((a, b) => {
        const x = sortValue(a, sort.key);
        const y = sortValue(b, sort.key);
        const c = typeof x === "string" ? x.localeCompare(String(y), undefined, { numeric: true }) : x - (y as number);
        return c * sort.dir || a.assetId.localeCompare(b.assetId, undefined, { numeric: true });
      }),
    [rows, sort],
  );
  const head = (key: SortKey, text: string, right = false) => (
    <th scope="col" aria-sort={sort.key === key ? (sort.dir === 1 ? "ascending" : "descending") : "none"} className={`px-2 py-1 ${right ? "text-right" : "text-left"}`}>
      <button type="button" className="font-medium hover:underline" onClick={() => setSort((s) => ({ key, dir: s.key === key ? ((-s.dir) as 1 | -1) : 1 }))}>
        {text}
        {sort.key === key ? (sort.dir === 1 ? " ▲" : " ▼") : ""}
      </button>
    </th>
  );
  return (
    <table className="w-full border-collapse text-sm" data-testid="conflict-table">
      <thead className="border-b border-sand-300 bg-sand-100">
        <tr>
          {head("assetId", "Asset")}
          <th scope="col" className="px-2 py-1 text-left font-medium">Kind</th>
          {head("impactDepthM", "Impact depth (m)", true)}
          <th scope="col" className="px-2 py-1 text-right font-medium">Buffer (m)</th>
          {head("depthMin", "Depth to horizon, min / median (m)", true)}
          <th scope="col" className="px-2 py-1 text-right font-medium">Thin cover</th>
          {head("unassessedShare", "Horizon unassessed", true)}
          {head("reach", "Works vs horizon")}
          {head("highestClassIndex", "Highest potential class")}
          <th scope="col" className="px-2 py-1 text-left font-medium">Classes under it ({labels.join(" / ")})</th>
          {head("mitigation", "Mitigation proposed")}
        </tr>
      </thead>
      <tbody>
        {sorted.map((r) => (
          <tr key={`${r.dataset}-${r.assetId}`} className="border-b border-sand-200 align-top" data-asset={r.assetId} data-reach={r.reach}>
            <th scope="row" className="px-2 py-1 text-left font-medium">{r.assetId}</th>
            <td className="px-2 py-1">{r.kind ?? "–"} <span className="text-xs text-sediment-600">({r.geometryType})</span></td>
            <td className="px-2 py-1 text-right">{num(r.impactDepthM, 1)}</td>
            <td className="px-2 py-1 text-right">{num(r.bufferM, 0)}</td>
            <td className="px-2 py-1 text-right">{r.depthToHorizonM.min === null ? "unassessed" : `${num(r.depthToHorizonM.min)} / ${num(r.depthToHorizonM.median)}`}</td>
            <td className="px-2 py-1 text-right">{pct(r.thinCoverShare)}</td>
            <td className="px-2 py-1 text-right">{pct(r.unassessedShare)}</td>
            <td className="px-2 py-1">
              <span className={r.reach === "reaches" ? "font-semibold text-caution-800" : r.reach === "may_reach" ? "font-medium" : ""}>{r.reachLabel}</span>
            </td>
            <td className="px-2 py-1">{r.highestClass ?? "none scored"}</td>
            <td className="px-2 py-1 text-xs">{r.classShares.map((c) => pct(c.share)).join(" / ")}{r.scoringUnassessedShare > 0 ? ` · unassessed ${pct(r.scoringUnassessedShare)}` : ""}</td>
            <td className="px-2 py-1" title={r.mitigation.text}>{r.mitigation.label}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

export default function ProjectRegulator({ loaderData }: Route.ComponentProps) {
  const { projectId, desk, legend, missing, settings, published, mayEditBuffers, mayRunScorings, exclusions } = loaderData;
  const result = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  const [params] = useSearchParams();
  const scoringQ = params.get("scoring") ? `&scoring=${params.get("scoring")}` : "";
  const problem = result && "error" in result ? result : null;
  const labels = desk?.conflicts.scoring.classification.labels ?? [];
  const byKind = new Map<string, { n: number; areaKm2: number; label: string }>();
  for (const z of exclusions.zones) {
    const e = byKind.get(z.kind) ?? { n: 0, areaKm2: 0, label: z.kindLabel };
    e.n++;
    e.areaKm2 += z.areaKm2;
    byKind.set(z.kind, e);
  }
  return (
    <div className="space-y-8" data-testid="review-desk">
      <header className="space-y-2">
        <h1 className="text-2xl font-semibold">Review desk</h1>
        <p className="max-w-4xl text-sm text-sediment-600">
          Before leasing or development: do the works reach a surviving land surface, how much of each block is of high potential, and which avoidance buffers to require. Every figure below is read from one full-resolution scoring; the assets and blocks are drawn on the{" "}
          <Link className="underline" to={`/projects/${projectId}/map`}>map</Link>.
        </p>
        {desk ? (
          <p className="text-sm" data-testid="desk-scoring">
            Scoring {desk.conflicts.scoring.id}: {String((desk.conflicts.scoring.weightSet as { name?: string } | null)?.name ?? "weight set")} v{String((desk.conflicts.scoring.weightSet as { version?: number } | null)?.version ?? "?")}, {desk.conflicts.scoring.targetLabel}, on {desk.conflicts.scoring.reconstruction.name}. Classes: {labels.join(", ")} (thresholds {desk.conflicts.scoring.classification.thresholds.join(", ")}).
          </p>
        ) : null}
        {published.length > 0 ? (
          <Form method="get" className="flex items-end gap-2 text-sm">
            <label className="flex flex-col">
              <span className="text-xs text-sediment-600">Read another published scoring</span>
              <select name="scoring" defaultValue={params.get("scoring") ?? ""} className="rounded-sm border border-sand-300 bg-white px-2 py-1">
                <option value="">Newest of the adopted version</option>
                {published.map((s) => (
                  <option key={s.id} value={s.id}>{s.label}</option>
                ))}
              </select>
            </label>
            <button type="submit" className="rounded-sm border border-sand-300 bg-white px-3 py-1">Show</button>
          </Form>
        ) : null}
      </header>

      <Cautions compact />

      {missing ? (
        <section className="max-w-3xl rounded-sm border border-sand-300 bg-white p-4" data-testid="desk-missing">
          <h2 className="font-semibold">Nothing to read yet</h2>
          <p className="mt-1 text-sm">{missing}</p>
          {mayRunScorings ? <p className="mt-2 text-sm"><Link className="underline" to={`/projects/${projectId}/weights`}>Go to the weight sets</Link> to score the adopted version at full resolution.</p> : <p className="mt-2 text-sm text-sediment-600">An analyst, lead or owner of the project can start it.</p>}
        </section>
      ) : null}

      {desk && legend ? (
        <figure className="flex flex-wrap items-start gap-6" data-testid="desk-map">
          <img
            src={`/api/projects/${projectId}/regulator/map.png${scoringQ ? `?${scoringQ.slice(1)}` : ""}`}
            alt="Map of the potential classes with the lease blocks, the development assets and the exclusion zones; every figure is in the tables below."
            className="max-h-96 border border-sand-300"
          />
          <figcaption className="max-w-sm space-y-1 text-sm">
            <p className="font-medium">Potential classes of scoring {desk.conflicts.scoring.id} ({desk.conflicts.scoring.targetLabel}), with the review's features</p>
            <ul className="space-y-0.5">
              {[...legend.classes, legend.unassessed, legend.notScored, legend.blocks, legend.assets, legend.exclusions].map((e) => (
                <li key={e.label} className="flex items-center gap-2">
                  <span aria-hidden className="inline-block h-3 w-5 border border-sand-400" style={{ background: `rgb(${e.rgb.join(",")})` }} />
                  {e.label}
                </li>
              ))}
            </ul>
            <p className="text-xs text-sediment-600">Open the <Link className="underline" to={`/projects/${projectId}/map`}>map workspace</Link> to pan, zoom and step through the ages.</p>
          </figcaption>
        </figure>
      ) : null}

      {desk ? (
        <section className="space-y-2" aria-labelledby="conflicts-h">
          <div className="flex items-baseline justify-between gap-4">
            <h2 id="conflicts-h" className="text-lg font-semibold">Conflict table</h2>
            <span className="space-x-3 text-sm">
              <a className="underline" href={`/api/projects/${projectId}/conflicts?format=csv${scoringQ}`}>Download CSV</a>
              <a className="underline" href={`/api/projects/${projectId}/conflicts?format=json${scoringQ}`}>JSON</a>
            </span>
          </div>
          {desk.conflicts.rows.length ? <div className="overflow-x-auto"><ConflictTable rows={desk.conflicts.rows} labels={labels} /></div> : null}
          <details className="max-w-4xl text-sm text-sediment-800">
            <summary className="cursor-pointer">How reach and mitigation are decided</summary>
            <p className="mt-1">{desk.conflicts.reachRule}</p>
            <p className="mt-1">{desk.conflicts.mitigationRule}</p>
          </details>
          {desk.conflicts.notes.map((n) => <p key={n} className="text-sm text-sediment-600">{n}</p>)}
        </section>
      ) : null}

      {desk ? (
        <section className="space-y-2" aria-labelledby="blocks-h">
          <div className="flex items-baseline justify-between gap-4">
            <h2 id="blocks-h" className="text-lg font-semibold">Lease blocks</h2>
            <span className="space-x-3 text-sm">
              <a className="underline" href={`/api/projects/${projectId}/blocks/figures?format=csv${scoringQ}`}>Download CSV</a>
              <a className="underline" href={`/api/projects/${projectId}/blocks/figures?format=json${scoringQ}`}>JSON</a>
            </span>
          </div>
          <div className="overflow-x-auto">
            <table className="w-full border-collapse text-sm" data-testid="block-table">
              <thead className="border-b border-sand-300 bg-sand-100">
                <tr>
                  <th scope="col" className="px-2 py-1 text-left font-medium">Block</th>
                  <th scope="col" className="px-2 py-1 text-right font-medium">Area (km²)</th>
                  {labels.map((l) => <th key={l} scope="col" className="px-2 py-1 text-right font-medium">{l}</th>)}
                  <th scope="col" className="px-2 py-1 text-right font-medium">Unassessed</th>
                  <th scope="col" className="px-2 py-1 text-right font-medium">Not scored</th>
                  <th scope="col" className="px-2 py-1 text-right font-medium">Mean / max potential</th>
                  <th scope="col" className="px-2 py-1 text-right font-medium">Known sites</th>
                  <th scope="col" className="px-2 py-1 text-left font-medium">Land at (ka BP)</th>
                </tr>
              </thead>
              <tbody>
                {desk.blocks.rows.map((b) => (
                  <tr key={`${b.dataset}-${b.name}`} className="border-b border-sand-200" data-block={b.name}>
                    <th scope="row" className="px-2 py-1 text-left font-medium">{b.name}</th>
                    <td className="px-2 py-1 text-right">{num(b.areaKm2)}</td>
                    {b.classes.map((c) => <td key={c.label} className="px-2 py-1 text-right">{pct(c.share)}</td>)}
                    <td className="px-2 py-1 text-right">{pct(b.unassessed.share)}</td>
                    <td className="px-2 py-1 text-right">{pct(b.notScored.share)}</td>
                    <td className="px-2 py-1 text-right">{num(b.meanPotential)} / {num(b.maxPotential)}</td>
                    <td className="px-2 py-1 text-right" data-testid="block-sites">{b.sites.shown}</td>
                    <td className="px-2 py-1">
                      {b.landAgesKa.length ? b.landAgesKa.join(", ") : "never mostly land"}
                      {b.partlyLandAgesKa.length ? <span className="text-xs text-sediment-600"> (partly: {b.partlyLandAgesKa.join(", ")})</span> : null}
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <p className="text-xs text-sediment-600">Shares are of each block's grid cells: the classes, unassessed ground (its own class, never low) and ground not scored at this age (sea or lake then) add up to 100 %. "Land at" lists the reconstructed ages at which at least half of the block was land.</p>
          {desk.blocks.notes.map((n) => <p key={n} className="text-sm text-sediment-600">{n}</p>)}
        </section>
      ) : null}

      <section className="space-y-2" aria-labelledby="zones-h" data-testid="zone-summary">
        <div className="flex items-baseline justify-between gap-4">
          <h2 id="zones-h" className="text-lg font-semibold">Zones</h2>
          <span className="space-x-3 text-sm">
            <a className="underline" href={`/api/projects/${projectId}/zones?kind=exclusion`}>Exclusion zones (GeoJSON)</a>
            {desk ? <a className="underline" href={`/api/projects/${projectId}/zones?kind=mitigation${scoringQ}`}>Mitigation zones (GeoJSON)</a> : null}
          </span>
        </div>
        <div className="grid gap-6 lg:grid-cols-2">
          <div>
            <h3 className="font-medium">Exclusion zones around discrete features</h3>
            {exclusions.zones.length ? (
              <table className="mt-1 w-full border-collapse text-sm">
                <thead className="border-b border-sand-300 bg-sand-100">
                  <tr>
                    <th scope="col" className="px-2 py-1 text-left font-medium">Feature</th>
                    <th scope="col" className="px-2 py-1 text-left font-medium">Kind</th>
                    <th scope="col" className="px-2 py-1 text-right font-medium">Uncertainty + buffer (m)</th>
                    <th scope="col" className="px-2 py-1 text-right font-medium">Area (km²)</th>
                  </tr>
                </thead>
                <tbody>
                  {exclusions.zones.map((z, i) => (
                    <tr key={i} className="border-b border-sand-200">
                      <td className="px-2 py-1">{z.label} <span className="text-xs text-sediment-600">({z.source})</span></td>
                      <td className="px-2 py-1">{z.kindLabel}</td>
                      <td className="px-2 py-1 text-right">{num(z.positionUncertaintyM, 0)} + {num(z.bufferM, 0)} = {num(z.distanceM, 0)}</td>
                      <td className="px-2 py-1 text-right">{num(z.areaKm2, 3)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            ) : (
              <p className="text-sm text-sediment-600">No wrecks, archaeological anomalies or find spots to draw zones around.</p>
            )}
            <p className="mt-1 text-xs text-sediment-600">
              {[...byKind.values()].map((e) => `${e.label}: ${e.n} zone${e.n === 1 ? "" : "s"}, ${e.areaKm2.toFixed(3)} km²`).join(" · ")}
            </p>
            {exclusions.notes.map((n) => <p key={n} className="text-sm text-sediment-600">{n}</p>)}
          </div>
          <div>
            <h3 className="font-medium">Graded mitigation from potential</h3>
            {desk ? (
              <table className="mt-1 w-full border-collapse text-sm" data-testid="mitigation-summary">
                <thead className="border-b border-sand-300 bg-sand-100">
                  <tr>
                    <th scope="col" className="px-2 py-1 text-left font-medium">Measure</th>
                    <th scope="col" className="px-2 py-1 text-left font-medium">Where</th>
                    <th scope="col" className="px-2 py-1 text-right font-medium">Area (km²)</th>
                  </tr>
                </thead>
                <tbody>
                  {desk.mitigation.map((m) => (
                    <tr key={`${m.measure}-${m.basis}`} className="border-b border-sand-200">
                      <td className="px-2 py-1">{m.label}</td>
                      <td className="px-2 py-1">{m.basis}</td>
                      <td className="px-2 py-1 text-right">{m.areaKm2.toFixed(2)}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            ) : (
              <p className="text-sm text-sediment-600">Mitigation zones need a scoring (above).</p>
            )}
            {desk?.mitigationNotes.map((n) => <p key={n} className="mt-1 text-xs text-sediment-600">{n}</p>)}
          </div>
        </div>
      </section>

      <section className="max-w-3xl space-y-2" aria-labelledby="buffers-h">
        <h2 id="buffers-h" className="text-lg font-semibold">Exclusion buffers</h2>
        <p className="text-sm text-sediment-600">{settings.source} Each zone is the feature's mapped extent plus its position uncertainty plus this buffer (or the buffer the data came with, when wider).</p>
        <Form method="post" className="flex flex-wrap items-end gap-4" data-testid="buffer-form">
          {(["wreck", "anomaly", "find_spot"] as const).map((k) => (
            <label key={k} className="flex flex-col text-sm">
              <span>{settings.labels[k]} (m)</span>
              <input
                name={k}
                type="number"
                min={0}
                max={settings.maxM}
                step="any"
                defaultValue={result && "saved" in result ? result.buffersM[k] : settings.buffersM[k]}
                disabled={!mayEditBuffers}
                className="w-32 rounded-sm border border-sand-300 bg-white px-2 py-1 text-right"
              />
            </label>
          ))}
          {mayEditBuffers ? <PrimaryButton type="submit" disabled={busy}>Save buffers</PrimaryButton> : null}
        </Form>
        <FormProblemNote message={problem?.error} />
        {result && "saved" in result ? <p className="text-sm" role="status">Buffers saved.</p> : null}
        {settings.updatedAt ? <p className="text-xs text-sediment-600">Last set {settings.updatedAt.replace("T", " ").slice(0, 16)} UTC.</p> : <p className="text-xs text-sediment-600">Defaults: nobody has set them for this project yet.</p>}
        {!mayEditBuffers ? <p className="text-xs text-sediment-600">Reviewers, leads and owners set the buffers.</p> : null}
      </section>
    </div>
  );
}
