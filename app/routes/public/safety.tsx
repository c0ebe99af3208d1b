// Safety notes: what a hazard declaration is and is not.
import { SafetyNotice } from "~/components/ui";
import type { Route } from "./+types/safety";

export function meta(_: Route.MetaArgs) {
  return [
    { title: "Safety notes — Diffractory" },
    { name: "description", content: "What a hazard declaration on Diffractory is and is not, and how clients and labs handle hazardous samples." },
  ];
}

export default function Safety() {
  return (
    <article className="mx-auto max-w-3xl px-4 py-12 sm:px-6">
      <h1 className="text-3xl font-bold">Safety notes</h1>
      <SafetyNotice className="mt-6" full />
      <div className="mt-8 space-y-4 text-ink-700">
        <p>
          Every sample carries a hazard declaration: the GHS pictograms (GHS01–GHS09) and H-statement codes of its safety data sheet, special categories such as
          radioactive, beryllium, nanomaterial, biological, air-sensitive, pyrophoric or export-controlled material with their details, handling notes, and
          whether the lab returns or disposes of the sample. Whenever anything is declared, the safety data sheet must be attached.
        </p>
        <p>
          Labs state which pictograms and categories they accept, and a lab member acknowledges the declaration before sending a quote. A parcel that does not
          match its declaration may be refused on arrival.
        </p>
        <p>Shipping dangerous goods follows the carrier's rules and the applicable transport regulations; Diffractory does not classify goods for transport.</p>
      </div>
    </article>
  );
}
