// Validation (design §5, issue 10): a published scoring — or a trained model — held against the
// project's in-situ sites and positive cores: the number of sites, ROC AUC and Kvamme's gain with
// bootstrap intervals, the capture curve; and two of them side by side on the same sites and
// classification. Leads and owners also set the project classification and keep the hold-out.
import { useEffect, useMemo, useState } from "react";
import { Link } from "react-router";
import { requireProjectAccess } from "~/permissions.server";
import { can } from "~/permissions";
import { listScorings, targetLabel, type ScoringTarget } from "~/scorings.server";
import { adoptedVersion } from "~/weight-sets.server";
import { modelValidationOptions } from "~/models.server";
import { AGE_RULE, classificationView, holdoutState, storedClassification } from "~/validations.server";
import { Cautions } from "~/components/Cautions";
import { GainChart } from "~/components/validation/GainChart";
import { CaptureChart } from "~/components/validation/CaptureChart";
import { EvidenceTable, GainTable, ValidationSummary } from "~/components/validation/ValidationSummary";
import { ClassificationEditor, ClassificationView, type ClassificationShown } from "~/components/validation/ClassificationEditor";
import { HoldoutPanel, type HoldoutShown } from "~/components/validation/HoldoutPanel";
import { SERIES_STYLE, subjectKey, validationHref, type ValidationSubjectOption, type ValidationView } from "~/components/validation/types";
import type { Route } from "./+types/project-validation";

export const meta = () => [{ title: "Validation · Lowstand" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { project, role } = await requireProjectAccess(request, params.projectId, "project.read");
  const mayEdit = can(role, "project.edit");
  const [scorings, adopted, holdout, modelOptions] = await Promise.all([listScorings(project.id), adoptedVersion(project.id), mayEdit ? holdoutState(project.id) : null, modelValidationOptions(project.id, role)]);
  const published = scorings.filter((s) => s.effectiveStatus === "published");
  // Trained models join the list for roles that may see them (models.read; never viewers).
  const subjects: ValidationSubjectOption[] = [
    ...published.map((s) => ({
      kind: "scoring" as const,
      id: s.id,
      label: `${s.version.setName} v${s.version.number}, ${targetLabel(s.target as unknown as ScoringTarget)}${adopted && adopted.version.id === s.weightSetVersionId ? " (adopted)" : ""}`,
    })),
    ...modelOptions,
  ];
  const preferred = published.find((s) => adopted && s.weightSetVersionId === adopted.version.id) ?? published[0];
  return {
    projectId: project.id,
    mayEdit,
    subjects,
    preferred: preferred ? subjectKey({ kind: "scoring", id: preferred.id }) : null,
    classification: classificationView(storedClassification(project.classification)) as unknown as ClassificationShown,
    holdout: holdout as HoldoutShown | null,
    rule: AGE_RULE,
  };
}

type Loaded = { state: "loading" } | { state: "error"; message: string } | { state: "ready"; v: ValidationView };

function useValidation(subject: ValidationSubjectOption | null, query: string, refresh: number): Loaded | null {
  const [loaded, setLoaded] = useState<Loaded | null>(null);
  useEffect(() => {
    if (!subject) return setLoaded(null);
    const ctl = new AbortController();
    setLoaded({ state: "loading" });
    fetch(`${validationHref(subject)}${query}`, { signal: ctl.signal })
      .then(async (res) => {
        const body = (await res.json()) as { validation?: ValidationView; error?: { message?: string } };
        if (!res.ok || !body.validation) setLoaded({ state: "error", message: body.error?.message ?? `The validation could not be read (${res.status}).` });
        else setLoaded({ state: "ready", v: body.validation });
      })
      .catch((e: unknown) => {
        if ((e as Error).name !== "AbortError") setLoaded({ state: "error", message: "The validation could not be read; try again." });
      });
    return () => ctl.abort();
  }, [subject, query, refresh]);
  return loaded;
}

export default function Validation({ loaderData }: Route.ComponentProps) {
  const { projectId, mayEdit, subjects, preferred, holdout, rule } = loaderData;
  const [classification, setClassification] = useState(loaderData.classification);
  const [aKey, setAKey] = useState(preferred ?? "");
  const [bKey, setBKey] = useState("");
  const [precision, setPrecision] = useState("");
  const [set, setSet] = useState("");
  const [refresh, setRefresh] = useState(0);
  const byKey = useMemo(() => new Map(subjects.map((s) => [subjectKey(s), s])), [subjects]);
  const a = byKey.get(aKey) ?? null;
  const b = bKey && bKey !== aKey ? (byKey.get(bKey) ?? null) : null;
  const query = useMemo(() => {
    const q = new URLSearchParams();
    if (precision.trim() && Number(precision) > 0) q.set("maxPrecisionM", precision.trim());
    if (set) q.set("set", set);
    const s = q.toString();
    return s ? `?${s}` : "";
  }, [precision, set]);
  const va = useValidation(a, query, refresh);
  const vb = useValidation(b, query, refresh);
  const ready = [a && va?.state === "ready" ? { name: a.label, v: va.v } : null, b && vb?.state === "ready" ? { name: b.label, v: vb.v } : null].filter((x): x is { name: string; v: ValidationView } => x !== null);
  const revealed = ready[0]?.v.holdout.revealed ?? false;
  const differentAges = ready.length === 2 && (ready[0].v.window.youngKa !== ready[1].v.window.youngKa || ready[0].v.window.oldKa !== ready[1].v.window.oldKa);

  return (
    <div className="max-w-6xl space-y-6" data-testid="validation-page">
      <header>
        <h1 className="text-2xl font-semibold text-deep-900">Validation</h1>
        <p className="mt-1 max-w-3xl text-sm text-sediment-800">
          How well a scoring's potential finds the project's known sites: each in-situ site and each core with archaeological material is scored on the raster of its own age or period; area shares are taken over cells that were land then, inside the surveyed area. The number of sites stands beside every figure — with few sites the intervals are wide.
        </p>
        <p className="mt-1 max-w-3xl text-xs text-sediment-600">{rule}</p>
      </header>
      <Cautions compact />

      {subjects.length === 0 ? (
        <p className="rounded-sm border border-sand-300 bg-sand-50 p-4 text-sm" data-testid="no-subjects">
          Nothing to validate yet. Score a weight set at full resolution on its page under <Link className="underline" to={`/projects/${projectId}/weights`}>Weights</Link> (Full resolution), then come back here.
        </p>
      ) : (
        <section aria-label="What to validate" className="flex flex-wrap items-end gap-4 text-sm">
          <label className="block">
            <span className="block text-xs text-sediment-600">Validate</span>
            <select className="rounded-sm border border-sand-300 px-2 py-1" value={aKey} onChange={(e) => setAKey(e.target.value)} aria-label="Validate">
              {subjects.map((s) => (
                <option key={subjectKey(s)} value={subjectKey(s)}>
                  {s.kind === "model" ? "Model: " : ""}
                  {s.label}
                </option>
              ))}
            </select>
          </label>
          <label className="block">
            <span className="block text-xs text-sediment-600">Compare with</span>
            <select className="rounded-sm border border-sand-300 px-2 py-1" value={bKey} onChange={(e) => setBKey(e.target.value)} aria-label="Compare with">
              <option value="">— nothing —</option>
              {subjects
                .filter((s) => subjectKey(s) !== aKey)
                .map((s) => (
                  <option key={subjectKey(s)} value={subjectKey(s)}>
                    {s.kind === "model" ? "Model: " : ""}
                    {s.label}
                  </option>
                ))}
            </select>
          </label>
          <label className="block">
            <span className="block text-xs text-sediment-600">Positions no less precise than (m)</span>
            <input className="w-28 rounded-sm border border-sand-300 px-2 py-1" inputMode="decimal" placeholder={ready[0] ? ready[0].v.maxPrecisionM.toFixed(1) : "cell diagonal"} value={precision} onChange={(e) => setPrecision(e.target.value)} aria-label="Largest position uncertainty (m)" />
          </label>
          {revealed ? (
            <label className="block">
              <span className="block text-xs text-sediment-600">Sites</span>
              <select className="rounded-sm border border-sand-300 px-2 py-1" value={set} onChange={(e) => setSet(e.target.value)} aria-label="Which sites">
                <option value="">all (the hold-out revealed)</option>
                <option value="team">the team's (without the hold-out)</option>
                <option value="holdout">the hold-out only</option>
              </select>
            </label>
          ) : null}
        </section>
      )}

      {(
        [
          [a, va],
          [b, vb],
        ] as [ValidationSubjectOption | null, Loaded | null][]
      ).map(([s, l]) =>
        s && l && l.state !== "ready" ? (
          <p key={subjectKey(s)} role={l.state === "error" ? "alert" : "status"} className={`text-sm ${l.state === "error" ? "text-caution-800" : "text-sediment-600"}`}>
            {s.label}: {l.state === "error" ? l.message : "validating (the first time reads the raster; later it is kept)…"}
          </p>
        ) : null,
      )}

      {ready.length ? (
        <>
          {differentAges ? (
            <p role="note" className="rounded-sm border-l-4 border-ember-500 bg-sand-100 px-3 py-2 text-sm">
              The two stand for different ages ({ready[0].v.window.label}; {ready[1].v.window.label}), so they are scored on different sites. Compare two of the same age or period for a like-for-like comparison.
            </p>
          ) : null}
          <div className={`grid gap-4 ${ready.length === 2 ? "md:grid-cols-2" : ""}`}>
            {ready.map((r, i) => (
              <ValidationSummary key={r.name} name={r.name} v={r.v} marker={ready.length === 2 ? (i === 0 ? "●" : "▲") : undefined} />
            ))}
          </div>
          <section aria-label="Gain per class" className="space-y-3">
            <h2 className="text-lg font-semibold text-deep-800">Gain per class</h2>
            <GainChart series={ready} />
            {ready.map((r) => (
              <GainTable key={r.name} name={r.name} v={r.v} />
            ))}
          </section>
          <section aria-label="Capture curve" className="space-y-3">
            <h2 className="text-lg font-semibold text-deep-800">Site-capture curve</h2>
            <CaptureChart series={ready} />
            {ready.length === 2 ? (
              <p className="text-xs text-sediment-600">
                {SERIES_STYLE.map((_, i) => `${i === 0 ? "● circles" : "▲ triangles"}: ${ready[i].name}`).join("   ")}
              </p>
            ) : null}
          </section>
          <section aria-label="Sites and cores" className="space-y-3">
            <h2 className="text-lg font-semibold text-deep-800">Sites and cores</h2>
            <EvidenceTable v={ready[0].v} />
            {differentAges ? <EvidenceTable v={ready[1].v} /> : null}
          </section>
        </>
      ) : null}

      <section aria-label="Project classification" className="space-y-2 rounded-sm border border-sand-200 bg-sand-50 p-4">
        <h2 className="text-lg font-semibold text-deep-800">Project classification</h2>
        <ClassificationView c={classification} />
        {mayEdit ? (
          <details>
            <summary className="cursor-pointer text-sm text-deep-700">Change it</summary>
            <div className="mt-2">
              <ClassificationEditor
                projectId={projectId}
                current={classification}
                scorings={subjects.filter((s) => s.kind === "scoring")}
                onSaved={(c) => {
                  setClassification(c);
                  setRefresh((n) => n + 1);
                }}
              />
            </div>
          </details>
        ) : null}
      </section>

      {mayEdit && holdout ? (
        <section aria-label="Hold-out" className="space-y-2 rounded-sm border border-sand-200 bg-sand-50 p-4">
          <h2 className="text-lg font-semibold text-deep-800">Hold-out</h2>
          <p className="text-xs text-sediment-600">A few sites kept from the team's figures while weights are tuned, so the plots are not fitted by hand; revealed when the weights are settled.</p>
          <HoldoutPanel projectId={projectId} initial={holdout} onChanged={() => setRefresh((n) => n + 1)} />
        </section>
      ) : null}
    </div>
  );
}
