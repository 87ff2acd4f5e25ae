package microphys

// References: the one bibliography of package microphys. Each entry is a key, as cited in doc
// comments ([Key]), followed by the full citation and its DOI (or ISBN/URL where there is no
// DOI). Add new keys in alphabetical order; the meta test checks that every key here is cited
// and every cited key is here. The DOIs were written from the publishers' citation records
// as remembered and have not all been re-checked online; verify before a release.
//
// [Beard1976] Beard, K. V., 1976: Terminal velocity and shape of cloud and precipitation
// drops aloft. J. Atmos. Sci., 33, 851–864. doi:10.1175/1520-0469(1976)033<0851:TVASOC>2.0.CO;2
//
// [BeardOchs1995] Beard, K. V., and H. T. Ochs, 1995: Collisions between small precipitation
// drops. Part II: Formulas for coalescence, temporary coalescence, and satellites. J. Atmos.
// Sci., 52, 3977–3996. doi:10.1175/1520-0469(1995)052<3977:CBSPDP>2.0.CO;2
//
// [BeardPruppacher1971] Beard, K. V., and H. R. Pruppacher, 1971: A wind tunnel investigation
// of the rate of evaporation of small water drops falling at terminal velocity in air.
// J. Atmos. Sci., 28, 1455–1464. doi:10.1175/1520-0469(1971)028<1455:AWTIOT>2.0.CO;2
//
// [Bolton1980] Bolton, D., 1980: The computation of equivalent potential temperature. Mon. Wea.
// Rev., 108, 1046–1053. doi:10.1175/1520-0493(1980)108<1046:TCOEPT>2.0.CO;2
//
// [Bowen1950] Bowen, E. G., 1950: The formation of rain by coalescence. Aust. J. Sci. Res.,
// A3, 193–213. doi:10.1071/CH9500193
//
// [CFStdNames2023] CF Conventions Committee, 2023: CF Standard Name Table, version 83
// (2023-10-17), entry mass_concentration_of_drizzle_in_air. No DOI;
// https://cfconventions.org/Data/cf-standard-names/83/build/cf-standard-name-table.html
//
// [CGPM1901] Bureau International des Poids et Mesures, 1901: Declaration on the unit of mass
// and on the definition of weight; conventional value of g_n (3rd CGPM, Resolution 2).
// Comptes Rendus de la 3e CGPM (1901), p. 70. No DOI;
// https://www.bipm.org/en/committees/cg/cgpm/3-1901/resolution-2
//
// [DormandPrince1980] Dormand, J. R., and P. J. Prince, 1980: A family of embedded Runge–Kutta
// formulae. J. Comput. Appl. Math., 6, 19–26. doi:10.1016/0771-050X(80)90013-3
//
// [GunnKinzer1949] Gunn, R., and G. D. Kinzer, 1949: The terminal velocity of fall for water
// droplets in stagnant air. J. Meteor., 6, 243–248.
// doi:10.1175/1520-0469(1949)006<0243:TTVOFF>2.0.CO;2
//
// [Hall1980] Hall, W. D., 1980: A detailed microphysical model within a two-dimensional dynamic
// framework: Model description and preliminary results. J. Atmos. Sci., 37, 2486–2507.
// doi:10.1175/1520-0469(1980)037<2486:ADMMWA>2.0.CO;2
//
// [Long1974] Long, A. B., 1974: Solutions to the droplet collection equation for polynomial
// kernels. J. Atmos. Sci., 31, 1040–1052. doi:10.1175/1520-0469(1974)031<1040:STTDCE>2.0.CO;2
//
// [LowList1982] Low, T. B., and R. List, 1982: Collision, coalescence and breakup of raindrops.
// Part I: Experimentally established coalescence efficiencies and fragment size distributions
// in breakup. J. Atmos. Sci., 39, 1591–1606.
// doi:10.1175/1520-0469(1982)039<1591:CCABOR>2.0.CO;2
//
// [PruppacherKlett1997] Pruppacher, H. R., and J. D. Klett, 1997: Microphysics of Clouds and
// Precipitation. 2nd ed. Kluwer Academic, 954 pp. doi:10.1007/978-0-306-48100-0
//
// [RogersYau1989] Rogers, R. R., and M. K. Yau, 1989: A Short Course in Cloud Physics. 3rd ed.
// Pergamon Press, 290 pp. No DOI; ISBN 0-7506-3215-1.
//
// [Seifert2005] Seifert, A., A. Khain, U. Blahak, and K. D. Beheng, 2005: Possible effects of
// collisional breakup on mixed-phase deep convection simulated by a spectral (bin) cloud
// model. J. Atmos. Sci., 62, 1917–1931. doi:10.1175/JAS3432.1
//
// [Simmel2002] Simmel, M., T. Trautmann, and G. Tetzlaff, 2002: Numerical solution of the
// stochastic collection equation—comparison of the Linear Discrete Method with other
// methods. Atmos. Res., 61, 135–148. doi:10.1016/S0169-8095(01)00131-4
//
// [USStdAtm1976] NOAA, NASA and USAF, 1976: U.S. Standard Atmosphere, 1976. U.S. Government
// Printing Office, Washington, D.C., NOAA-S/T 76-1562, 227 pp. No DOI; NASA technical report
// NASA-TM-X-74335, https://ntrs.nasa.gov/citations/19770009539
//
// [AbramowitzStegun1964] Abramowitz, M., and I. A. Stegun, Eds., 1964: Handbook of
// Mathematical Functions. National Bureau of Standards, Applied Mathematics Series 55, 1046 pp.
// No DOI.
//
// [Barker1996] Barker, H. W., 1996: A parameterization for computing grid-averaged solar
// fluxes for inhomogeneous marine boundary layer clouds. Part I: Methodology and homogeneous
// biases. J. Atmos. Sci., 53, 2289–2303. doi:10.1175/1520-0469(1996)053<2289:APFCGA>2.0.CO;2
//
// [Braga2021] Braga, R. C., D. Rosenfeld, O. O. Krüger, B. Ervens, B. A. Holanda, M. Wendisch,
// T. Krisna, U. Pöschl, M. O. Andreae, C. Voigt, and M. L. Pöhlker, 2021: Linear relationship
// between effective radius and precipitation water content near the top of convective clouds:
// measurement results from ACRIDICON–CHUVA campaign. Atmos. Chem. Phys., 21, 14079–14088
// (pages from memory). doi:10.5194/acp-21-14079-2021
//
// [Brenguier2000] Brenguier, J.-L., H. Pawlowska, L. Schüller, R. Preusker, J. Fischer, and
// Y. Fouquart, 2000: Radiative properties of boundary layer clouds: Droplet effective radius
// versus number concentration. J. Atmos. Sci., 57, 803–821.
// doi:10.1175/1520-0469(2000)057<0803:RPOBLC>2.0.CO;2
//
// [Comstock2004] Comstock, K. K., R. Wood, S. E. Yuter, and C. S. Bretherton, 2004:
// Reflectivity and rain rate in and below drizzling stratocumulus. Quart. J. Roy. Meteor.
// Soc., 130, 2891–2918. doi:10.1256/qj.03.187
//
// [Glickman2000] Glickman, T. S., Ed., 2000: Glossary of Meteorology. 2nd ed. Amer. Meteor.
// Soc., 855 pp. Entry "Moist-adiabatic lapse rate" (glossary.ametsoc.org). No DOI.
//
// [GrabowskiSmolarkiewicz1996] Grabowski, W. W., and P. K. Smolarkiewicz, 1996: Two-time-level
// semi-Lagrangian modeling of precipitating clouds. Mon. Wea. Rev., 124, 487–497.
// doi:10.1175/1520-0493(1996)124<0487:TTLSLM>2.0.CO;2
//
// [Grosvenor2018] Grosvenor, D. P., and coauthors, 2018: Remote sensing of droplet number
// concentration in warm clouds: A review of the current state of knowledge and perspectives.
// Rev. Geophys., 56, 409–453. doi:10.1029/2017RG000593
//
// [Kessler1969] Kessler, E., 1969: On the Distribution and Continuity of Water Substance in
// Atmospheric Circulations. Meteor. Monogr., No. 32, Amer. Meteor. Soc., 84 pp.
// doi:10.1007/978-1-935704-36-2_1
//
// [KhairoutdinovKogan2000] Khairoutdinov, M., and Y. Kogan, 2000: A new cloud physics
// parameterization in a large-eddy simulation model of marine stratocumulus. Mon. Wea. Rev.,
// 128, 229–243. doi:10.1175/1520-0493(2000)128<0229:ANCPPI>2.0.CO;2
//
// [LebsockWitte2023] Lebsock, M. D., and M. Witte, 2023: Quantifying the dependence of drop
// spectrum width on cloud drop number concentration for cloud remote sensing. Atmos. Chem.
// Phys., 23, 14293–14305. doi:10.5194/acp-23-14293-2023
//
// [LiuDaum2004] Liu, Y., and P. H. Daum, 2004: Parameterization of the autoconversion
// process. Part I: Analytical formulation of the Kessler-type parameterizations. J. Atmos.
// Sci., 61, 1539–1548. doi:10.1175/1520-0469(2004)061<1539:POTAPI>2.0.CO;2
//
// [Quaas2006] Quaas, J., O. Boucher, and U. Lohmann, 2006: Constraining the total aerosol
// indirect effect in the LMDZ and ECHAM4 GCMs using MODIS satellite data. Atmos. Chem. Phys.,
// 6, 947–955. doi:10.5194/acp-6-947-2006
//
// [RosenfeldGutman1994] Rosenfeld, D., and G. Gutman, 1994: Retrieving microphysical
// properties near the tops of potential rain clouds by multispectral analysis of AVHRR data.
// Atmos. Res., 34, 259–283. doi:10.1016/0169-8095(94)90096-5
//
// [SeifertBeheng2001] Seifert, A., and K. D. Beheng, 2001: A double-moment parameterization
// for simulating autoconversion, accretion and selfcollection. Atmos. Res., 59–60, 265–281.
// doi:10.1016/S0169-8095(01)00126-0
//
// [Stephens1978] Stephens, G. L., 1978: Radiation profiles in extended water clouds. II:
// Parameterization schemes. J. Atmos. Sci., 35, 2123–2132.
// doi:10.1175/1520-0469(1978)035<2123:RPIEWC>2.0.CO;2
//
// [Taylor1997] Taylor, J. R., 1997: An Introduction to Error Analysis: The Study of
// Uncertainties in Physical Measurements. 2nd ed., University Science Books, 327 pp.
// ISBN 978-0-935702-75-0 (propagation of errors, ch. 3; covariance, ch. 9)
//
// [USSA1976] NOAA, NASA and USAF, 1976: U.S. Standard Atmosphere, 1976. U.S. Government
// Printing Office, Washington, D.C., NOAA-S/T 76-1562, 227 pp. Identical below 32 km to the
// ICAO Standard Atmosphere (ICAO Doc 7488/3, 1993). No DOI;
// https://ntrs.nasa.gov/citations/19770009539
//
// [VanZanten2005] vanZanten, M. C., B. Stevens, G. Vali, and D. H. Lenschow, 2005:
// Observations of drizzle in nocturnal marine stratocumulus. J. Atmos. Sci., 62, 88–106.
// doi:10.1175/JAS-3355.1
//
// [Wood2005] Wood, R., 2005: Drizzle in stratiform boundary layer clouds. Part II:
// Microphysical aspects. J. Atmos. Sci., 62, 3034–3050. doi:10.1175/JAS3530.1
//
// [Wood2005a] Wood, R., 2005: Drizzle in stratiform boundary layer clouds. Part I:
// Vertical and horizontal structure. J. Atmos. Sci., 62, 3011–3033. doi:10.1175/JAS3529.1
//
// [Wood2012] Wood, R., 2012: Stratocumulus clouds. Mon. Wea. Rev., 140, 2373–2423.
// doi:10.1175/MWR-D-11-00121.1
//
// [WoodHartmann2006] Wood, R., and D. L. Hartmann, 2006: Spatial variability of liquid water
// path in marine low cloud: The importance of mesoscale cellular convection. J. Climate, 19,
// 1748–1764. doi:10.1175/JCLI3702.1
