import { describe, expectTypeOf, it } from 'vitest';
import type * as Server from '$lib/server/tracking/projection';
import type { LocationClass } from '$lib/server/tracking/types';
import type * as Shared from './types';

// The browser's copy of the public journey shape must stay the server's shape exactly; svelte-check
// and tsc fail on these lines when the two drift apart.
describe('map types shared with the browser', () => {
	it('match the public projection’s GeoJSON exactly', () => {
		expectTypeOf<Shared.JourneyGeoJSON>().toEqualTypeOf<Server.JourneyGeoJSON>();
		expectTypeOf<Shared.JourneyLineFeature>().toEqualTypeOf<Server.JourneyLineFeature>();
		expectTypeOf<Shared.JourneyPointFeature>().toEqualTypeOf<Server.JourneyPointFeature>();
		expectTypeOf<Shared.CellDeg>().toEqualTypeOf<Server.CellDeg>();
		expectTypeOf<Shared.LocationClassCode>().toEqualTypeOf<LocationClass>();
	});
});
