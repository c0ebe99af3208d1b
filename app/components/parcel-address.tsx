// A parcel address as written on a packing slip, a parcel label or an order page: the organisation, the address
// lines, who takes the parcel and when; or a plain sentence when the organisation has given none.
import type { ProfileAddress } from "./profile-screen";

export type ParcelAddressData = Pick<ProfileAddress, "lines" | "contactName" | "contactPhone" | "openingHours">;

export function ParcelAddress({ name, address, missing }: { name: string; address: ParcelAddressData | null | undefined; missing: string }) {
  return (
    <address className="text-sm not-italic" data-testid="parcel-address">
      <span className="block font-semibold">{name}</span>
      {address ? (
        <>
          {address.lines.map((l) => (
            <span key={l} className="block">
              {l}
            </span>
          ))}
          {address.contactName || address.contactPhone ? (
            <span className="mt-1 block">Contact: {[address.contactName, address.contactPhone].filter(Boolean).join(", ")}</span>
          ) : null}
          {address.openingHours ? <span className="block">Parcels taken in: {address.openingHours}</span> : null}
        </>
      ) : (
        <span className="block text-ink-600">{missing}</span>
      )}
    </address>
  );
}
