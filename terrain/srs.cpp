// CRS parsing for crs.go: OGRSpatialReference::SetFromUserInput with GDAL's
// own limitations list, which forbids reading a file or fetching a URL
// named as a CRS definition. The C API gains those options only in GDAL 3.9
// (OSRSetFromUserInputEx); this is the same call for 3.6.

#include <ogr_spatialref.h>
#include <ogr_srs_api.h>

extern "C" OGRSpatialReferenceH canalstepNewSRS(const char *def) {
	OGRSpatialReference *sr = new OGRSpatialReference();
	sr->SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
	if (sr->SetFromUserInput(def, OGRSpatialReference::SET_FROM_USER_INPUT_LIMITATIONS_get()) != OGRERR_NONE) {
		sr->Release();
		return nullptr;
	}
	return OGRSpatialReference::ToHandle(sr);
}
