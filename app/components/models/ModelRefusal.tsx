// Why a model was refused: the presences that remain against the minimum, and what was left out
// and why (derived, trawled and dredged finds, imprecise positions, cores without material, …).
export interface RefusalNumbers {
  presences: number;
  sites: number;
  cores: number;
  minimum: number;
  excluded: Record<string, number>;
  heldOut: number;
}

export function ModelRefusal({ message, numbers }: { message: string; numbers: RefusalNumbers | null }) {
  return (
    <section role="alert" aria-labelledby="model-refusal-title" className="rounded-md border border-caution-600 bg-white p-4 text-sm">
      <h2 id="model-refusal-title" className="font-semibold text-caution-800">
        No model: too few sites
      </h2>
      {numbers ? (
        <>
          <p className="mt-1">
            <span className="text-2xl font-semibold tabular-nums" data-testid="presences-remaining">
              {numbers.presences}
            </span>{" "}
            presences remain ({numbers.sites} in-situ site{numbers.sites === 1 ? "" : "s"}, {numbers.cores} core{numbers.cores === 1 ? "" : "s"} with archaeological material); the
            forest needs at least <span className="font-semibold tabular-nums">{numbers.minimum}</span>.
          </p>
          {Object.keys(numbers.excluded).length || numbers.heldOut ? (
            <table className="mt-2 text-sm">
              <caption className="text-left text-xs uppercase tracking-wide text-sediment-600">Left out of training</caption>
              <tbody>
                {Object.entries(numbers.excluded).map(([reason, n]) => (
                  <tr key={reason}>
                    <td className="pr-3 text-right tabular-nums">{n}</td>
                    <td>{reason}</td>
                  </tr>
                ))}
                {numbers.heldOut ? (
                  <tr>
                    <td className="pr-3 text-right tabular-nums">{numbers.heldOut}</td>
                    <td>held-out site{numbers.heldOut === 1 ? "" : "s"} (kept for validation)</td>
                  </tr>
                ) : null}
              </tbody>
            </table>
          ) : null}
          <p className="mt-2 text-xs text-sediment-700">
            Derived, trawled and dredged finds were moved from where people lived and never train a model; a core without archaeological material is not an absence. Record more
            in-situ sites (or cores with material) before training, or weigh the factors by hand.
          </p>
        </>
      ) : (
        <p className="mt-1">{message}</p>
      )}
    </section>
  );
}
