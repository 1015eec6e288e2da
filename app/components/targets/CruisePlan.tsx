// The cruise plan of a list: the visiting order from the port and back, the hours, and how many cores
// the ship days allow.
import type { PlanView } from "~/target-lists.server";

export function CruisePlanView({ plan }: { plan: PlanView }) {
  return (
    <section aria-label="Cruise plan" className="space-y-2">
      <h2 className="font-semibold">Cruise plan</h2>
      <p className="text-sm" data-testid="plan-summary">
        From {plan.port.name} ({plan.port.latDdm} {plan.port.lonDdm}) and back at {plan.settings.speedKnots} kn, {plan.settings.stationHours} h on station per core:{" "}
        <strong>
          {plan.coresThatFit} cores fit {plan.settings.shipDays} ship day{plan.settings.shipDays === 1 ? "" : "s"}
        </strong>{" "}
        — {plan.totalHours.toFixed(1)} h of {plan.availableHours.toFixed(1)} h ({plan.transitHours.toFixed(1)} h transit, {plan.totalDistanceKm.toFixed(1)} km; {plan.stationHours.toFixed(1)} h on
        station). {plan.fits ? "The plan fits." : "Nothing fits the ship days."}
      </p>
      <p className="text-sm">
        Order (ranks): <span className="tabular-nums">{plan.order.join(" → ")}</span>
        {plan.dropped.length ? <span> · left ashore by the ship days: {plan.dropped.join(", ")}</span> : null}
      </p>
      {plan.legs.length ? (
        <details>
          <summary className="cursor-pointer text-sm">Legs</summary>
          <table className="text-xs">
            <tbody>
              {plan.legs.map((l, k) => (
                <tr key={k}>
                  <td className="pr-3">
                    {l.from} → {l.to}
                  </td>
                  <td className="pr-3 tabular-nums">{l.distanceKm.toFixed(2)} km</td>
                  <td className="tabular-nums">{l.hours.toFixed(2)} h</td>
                </tr>
              ))}
            </tbody>
          </table>
        </details>
      ) : null}
    </section>
  );
}
