"""OpenFOAM dictionaries of the CFD case, as Python string templates (ours, written for the
ESI flavour v1912 that Debian packages; :data:`FLAVOUR` names it in every header).

Every length is in metres, every pressure kinematic (m²/s², p/ρ) as simpleFoam expects.
Placeholders are ``str.format`` fields; literal braces are doubled.
"""

from __future__ import annotations

__all__ = ["FILES", "FLAVOUR", "PLATE_ZONE", "STL_ZONE", "ZONE_FUNCTION", "header"]

#: The OpenFOAM flavour and version these templates are written for.
FLAVOUR = "OpenFOAM ESI v1912"


def header(cls: str, obj: str, location: str = "") -> str:
    """The ``FoamFile`` header of one dictionary or field file."""
    loc = f'    location    "{location}";\n' if location else ""
    return (
        f"// written by ductgen for {FLAVOUR}; lengths in metres, pressure kinematic (m2/s2)\n"
        "FoamFile\n{\n    version     2.0;\n    format      ascii;\n"
        f"    class       {cls};\n{loc}    object      {obj};\n}}\n\n"
    )


BLOCK_MESH = """convertToMeters 1;

vertices
(
    ({x0} {y0} {zb}) ({x1} {y0} {zb}) ({x1} {y1} {zb}) ({x0} {y1} {zb})
    ({x0} {y0} 0) ({x1} {y0} 0) ({x1} {y1} 0) ({x0} {y1} 0)
    ({x0} {y0} {zt}) ({x1} {y0} {zt}) ({x1} {y1} {zt}) ({x0} {y1} {zt})
);

blocks
(
    hex (0 1 2 3 4 5 6 7) ({nx} {ny} {nzl}) simpleGrading (1 1 1)
    hex (4 5 6 7 8 9 10 11) ({nx} {ny} {nzu}) simpleGrading (1 1 {gz})
);

boundary
(
    inlet {{ type patch; faces ((4 7 11 8){lower_inlet}); }}
    outflow {{ type patch; faces ((5 9 10 6){lower_outflow}); }}
    top {{ type patch; faces ((8 11 10 9)); }}
    sides {{ type patch; faces ((4 8 9 5) (7 6 10 11){lower_sides}); }}
    lowerBox
    {{
        type wall;
        faces ((0 3 2 1){lower_walls});
    }}
);
"""

FEATURES = """duct.stl
{{
    extractionMethod    extractFromSurface;
    includedAngle       {included_angle};
    subsetFeatures {{ nonManifoldEdges no; openEdges yes; }}
    writeObj            no;
}}
"""

SNAPPY = """castellatedMesh true;
snap            true;
addLayers       true;

geometry
{{
    duct.stl {{ type triSurfaceMesh; name duct; }}
    opening {{ type searchableBox; min ({bx0} {by0} {bz0}); max ({bx1} {by1} {bz1}); }}
    approach {{ type searchableBox; min ({ax0} {ay0} {az0}); max ({ax1} {ay1} {az1}); }}
}}

castellatedMeshControls
{{
    maxLocalCells 2000000;
    maxGlobalCells 20000000;
    minRefinementCells 0;
    maxLoadUnbalance 0.10;
    nCellsBetweenLevels 2;
    features ( {{ file "duct.eMesh"; level {feature_level}; }} );
    refinementSurfaces
    {{
        duct
        {{
            level (1 {cavity_level});
            regions
            {{
                floor {{ level ({floor_level} {floor_level}); patchInfo {{ type wall; }} }}
                cavity {{ level ({cavity_level} {cavity_level}); patchInfo {{ type wall; }} }}
                hose {{ level ({hose_level} {hose_level}); patchInfo {{ type wall; }} }}
                outlet {{ level ({cavity_level} {cavity_level}); patchInfo {{ type patch; }} }}
            }}
        }}
    }}
    resolveFeatureAngle 30;
    refinementRegions
    {{
        opening {{ mode inside; levels ((1e15 {box_level})); }}
        approach {{ mode inside; levels ((1e15 {approach_level})); }}
    }}
    locationInMesh ({lx} {ly} {lz});
    allowFreeStandingZoneFaces true;
}}

snapControls
{{
    nSmoothPatch 3;
    tolerance 2.0;
    nSolveIter 50;
    nRelaxIter 5;
    nFeatureSnapIter 10;
    implicitFeatureSnap false;
    explicitFeatureSnap true;
    multiRegionFeatureSnap false;
}}

// Layers: snappyHexMesh's layer truncation (nBufferCellsNoExtrude >= 0) tapers the
// layer count from 1 to 5 over four rows of faces round every point it does not extrude;
// on the coarse mesh the unextruded points along the ramp's floor-wall corners left all
// five layers on only 54 % of the cavity's faces. Without truncation (-1), with the
// layers thinned where they near the medial axis and the relaxed quality limits from the
// first iteration (tet quality is not a finite-volume measure; inverted pyramids,
// non-orthogonality and the rest still apply), all five reach 98.8 % (club sample).
addLayersControls
{{
    relativeSizes true;
    layers {{ "duct_(floor|cavity|hose)" {{ nSurfaceLayers {layers}; }} }}
    expansionRatio 1.2;
    finalLayerThickness 0.3;
    minThickness 0.02;
    nGrow 0;
    featureAngle 180;
    slipFeatureAngle 80;
    nRelaxIter 5;
    nSmoothSurfaceNormals 1;
    nSmoothNormals 3;
    nSmoothThickness 10;
    maxFaceThicknessRatio 0.8;
    maxThicknessToMedialRatio 0.3;
    minMedialAxisAngle 90;
    nBufferCellsNoExtrude -1;
    nLayerIter 50;
    nRelaxedIter 0;
}}

meshQualityControls
{{
    #includeEtc "caseDicts/meshQualityDict"
    nSmoothScale 4;
    errorReduction 0.75;
    relaxed
    {{
        maxNonOrtho 75; maxConcave 90; minTwist -1; minDeterminant 1e-6; minFaceWeight 0.01;
        minVolRatio 0.001; minTetQuality -1e30;
    }}
}}

writeFlags (layerFields);
mergeTolerance 1e-6;
"""

CONTROL = """application     simpleFoam;
startFrom       startTime;
startTime       0;
stopAt          endTime;
endTime         {max_iterations};
deltaT          1;
writeControl    timeStep;
writeInterval   {max_iterations};
purgeWrite      0;
writeFormat     binary;
writePrecision  8;
writeCompression off;
timeFormat      general;
timePrecision   6;
runTimeModifiable true;

functions
{{
    total
    {{
        type pressure; libs ("libfieldFunctionObjects.so");
        mode total; result p0; rho rhoInf; rhoInf 1;
        executeControl timeStep; writeControl writeTime;
    }}
    faces
    {{
        type surfaceInterpolate; libs ("libfieldFunctionObjects.so");
        fields ((p0 p0f) (p pf) (U Uf));
        executeControl writeTime; writeControl writeTime;
    }}
    outletFlow
    {{
        type surfaceFieldValue; libs ("libfieldFunctionObjects.so");
        writeControl timeStep; writeInterval 1; log false; writeFields false;
        regionType patch; name duct_outlet; operation sum; fields (phi);
    }}
    outletTotal
    {{
        type surfaceFieldValue; libs ("libfieldFunctionObjects.so");
        writeControl writeTime; log false; writeFields false;
        regionType patch; name duct_outlet; operation weightedAverage; weightField phi;
        fields (p0 p U);
    }}
    outletArea
    {{
        type surfaceFieldValue; libs ("libfieldFunctionObjects.so");
        writeControl writeTime; log false; writeFields false;
        regionType patch; name duct_outlet; operation areaAverage; fields (p);
    }}
{throat_functions}
    freeStream
    {{
        type probes; libs ("libsampling.so");
        writeControl writeTime; fields (p U);
        probeLocations (({px} {py} {pz}));
    }}
    throatLine
    {{
        type sets; libs ("libsampling.so");
        writeControl writeTime; interpolationScheme cell; setFormat raw; fields (p);
        sets
        (
            depth
            {{
                type midPoint; axis {line_axis};
                start ({lx0} {ly0} {lz0}); end ({lx1} {ly1} {lz1});
            }}
        );
    }}
    yPlus
    {{
        type yPlus; libs ("libfieldFunctionObjects.so");
        writeControl writeTime; log false;
    }}
}}
"""

ZONE_FUNCTION = """    {name}
    {{
        type surfaceFieldValue; libs ("libfieldFunctionObjects.so");
        writeControl writeTime; log false; writeFields false;
        regionType faceZone; name {zone};
        operation {operation};{extra}
        fields ({fields});
    }}
"""

#: Planes as face zones: mesh faces crossed by a plate at x = const across the duct below the
#: skin (a closed set of faces, so its flux balances the outlet exactly): the throat, and the
#: transition's exit where the straight extension begins.
TOPOSET = """actions
(
{zones}
);
"""

PLATE_ZONE = """    {{
        name {name};
        type faceZoneSet;
        action new;
        source searchableSurfaceToFaceZone;
        sourceInfo
        {{
            surface searchablePlate;
            origin ({x} {y0} {z0});
            span (0 {dy} {dz});
        }}
    }}
"""

#: A face zone from an STL plate in constant/triSurface (curved skins: tilted planes).
STL_ZONE = """    {{
        name {name};
        type faceZoneSet;
        action new;
        source searchableSurfaceToFaceZone;
        sourceInfo {{ surface triSurfaceMesh; surfaceName {file}; }}
    }}
"""

SCHEMES = """ddtSchemes {{ default steadyState; }}
gradSchemes {{ default Gauss linear; grad(U) cellLimited Gauss linear 1; }}
divSchemes
{{
    default none;
    div(phi,U) bounded Gauss linearUpwind grad(U);
    div(phi,k) bounded Gauss upwind;
    div(phi,omega) bounded Gauss upwind;
    div((nuEff*dev2(T(grad(U))))) Gauss linear;
}}
laplacianSchemes {{ default Gauss linear limited corrected 0.33; }}
interpolationSchemes {{ default linear; }}
snGradSchemes {{ default limited corrected 0.33; }}
wallDist {{ method meshWave; }}
"""

SOLUTION = """solvers
{{
    p {{ solver GAMG; smoother GaussSeidel; tolerance 1e-7; relTol 0.05; }}
    "(U|k|omega)" {{ solver smoothSolver; smoother symGaussSeidel; tolerance 1e-8; relTol 0.1; }}
}}
SIMPLE {{ nNonOrthogonalCorrectors 0; consistent yes; }}
relaxationFactors {{ fields {{ p 0.7; }} equations {{ U 0.9; ".*" 0.8; }} }}
"""

TRANSPORT = """transportModel Newtonian;
nu {nu};
"""

TURBULENCE = """simulationType RAS;
RAS {{ RASModel {model}; turbulence on; printCoeffs off; }}
"""

#: RAS models a case may use (OpenFOAM's name → words for the report). Both solve for k and
#: ω with the same inflow profiles and wall functions, so the second is a model-sensitivity
#: check on the same mesh: Menter's SST (Menter, AIAA Journal 32(8), 1994; the default) and
#: Wilcox's k-ω as OpenFOAM implements it (Wilcox, Turbulence Modeling for CFD, 1998: no
#: shear-stress limiter, so it tends to predict separation later under an adverse pressure
#: gradient).
TURBULENCE_MODELS = {"kOmegaSST": "k-omega SST", "kOmega": "k-omega (Wilcox)"}

DECOMPOSE = """numberOfSubdomains {n};
method hierarchical;
hierarchicalCoeffs {{ n ({n} 1 1); order xyz; }}
"""

FAN_CURVE = """// the duct system behind the outlet (1-D model): (flow m3/s, -p_outlet m2/s2)
(
{rows}
)
"""

#: (path in the case, class, object, template) of the fixed dictionaries.
FILES = {
    "blockMesh": ("system/blockMeshDict", "dictionary", "blockMeshDict", BLOCK_MESH),
    "features": (
        "system/surfaceFeatureExtractDict",
        "dictionary",
        "surfaceFeatureExtractDict",
        FEATURES,
    ),
    "snappy": ("system/snappyHexMeshDict", "dictionary", "snappyHexMeshDict", SNAPPY),
    "control": ("system/controlDict", "dictionary", "controlDict", CONTROL),
    "schemes": ("system/fvSchemes", "dictionary", "fvSchemes", SCHEMES),
    "solution": ("system/fvSolution", "dictionary", "fvSolution", SOLUTION),
    "transport": ("constant/transportProperties", "dictionary", "transportProperties", TRANSPORT),
    "turbulence": (
        "constant/turbulenceProperties",
        "dictionary",
        "turbulenceProperties",
        TURBULENCE,
    ),
    "topoSet": ("system/topoSetDict", "dictionary", "topoSetDict", TOPOSET),
    "decompose": ("system/decomposeParDict", "dictionary", "decomposeParDict", DECOMPOSE),
}
