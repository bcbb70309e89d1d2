"""Every problem a user can meet, in one place.

Most constants are the ``problem`` of a :class:`~pinlib.core.errors.PinlibError`: the words
that say what is wrong.  The error adds where (file, line, field), the value that was
given, what was expected and a hint, so these texts stay short and need no location.
A constant with ``{placeholders}`` is a template, filled with ``str.format``::

    raise DesignError(messages.BUS_HAS_NO_MODE.format(protocol="spi"), ...)

The other constants are the texts of pinlib's warnings (the ``ValidityWarning`` of
``pinlib/physics/lines.py`` and of ``pinlib/physics/waveform.py``, the ``FitWarning`` of
``pinlib/physics/driver.py``) and the sentences that the design-review report
(``pinlib/present/review/``) prints where a chart could not be drawn, no sampled check varies,
or there is no snapshot to compare with.

``tests/test_messages.py`` triggers each of them once and checks the text.

Notes (what an engine assumed, how a batch was evaluated) are not problems and stay
beside the code that writes them.  A value of the wrong kind (text where a number is
due, a number where a table is) is named by the record layer (:mod:`pinlib.core.records`)
in the words below.  Two ``ValueError`` texts of the converted modules are not here because no file
or command line reaches them, only a program calling pinlib wrongly: ``parse`` with an
unknown expected unit, and ``Sourced.at`` of a relative threshold without a supply.
A ``RuntimeError`` is not here either: it is a bug in pinlib, two of its own walks that
disagree (the open-drain wording against its batch's checks), and its text names the
ids beside the code that finds it.
"""

from __future__ import annotations

__all__ = ["MODULES", "all_messages"]

# ---------------------------------------------------------------- shared by several modules
NEGATIVE_VALUE = "a negative value"
# a hard refusal: "plausible" is the soft range of pinlib/library/plausible.py, which
# only warns (docs/formats/part.md)
OUTSIDE_RANGE = "outside the allowed range"
UNKNOWN_PART = "unknown part"
UNKNOWN_FIELD = "unknown field"
MISSING_FIELD = "a required field is missing"
NOT_ALLOWED_VALUE = "not one of the allowed values"
UNKNOWN_BASIS = "unknown basis"
NOT_A_FOLDER = "not a folder"
NO_SUCH_REFERENCE = "no device with this reference"

# ---------------------------------------------------------------- pinlib/core/tomlfile.py
FILE_NOT_FOUND = "file not found"
NOT_UTF8 = "not UTF-8 text"
NOT_UTF8_WHERE = "byte {byte} at column {column} is not UTF-8; save the file as UTF-8"
UTF16_TEXT = "UTF-16 text (the file starts with its byte-order mark), not UTF-8"
NUL_BYTE = ("a NUL byte at column {column}: binary data or UTF-16 text, "
            "not UTF-8 text")
NOT_A_REGULAR_FILE = "not a regular file (a device, a pipe or a socket is not read)"
FILE_TOO_LARGE = "the file holds {size:,} bytes, more than the {limit:,} read"
NESTED_TOO_DEEP = "arrays or tables nested deeper than {limit} levels"
CANNOT_READ = "cannot read the file: {reason}"
# core/pathkind.py's callers: a folder or file name the system will not look up
CANNOT_READ_FOLDER = "cannot read the folder: {reason}"
CANNOT_USE_NAME = "cannot use this name: {reason}"
NOT_TOML = "not valid TOML: {detail}"
CANNOT_LOCK = "cannot lock the file: {reason}"
LOCK_IS_A_LINK = "its lock file {lock} is a symbolic link, which pinlib does not follow"
CANNOT_WRITE_IN_FOLDER = "cannot write in this folder: {reason}"
FOLDER_NOT_WRITABLE = "the folder {folder} is not writable by this user ({user})"
FOLDER_READ_ONLY_FS = "the folder {folder} is on a read-only file system"
FOLDER_MISSING = "the folder {folder} does not exist"
FOLDER_MISSING_HINT = "create it first, or name a folder that exists"
LOCK_NOT_WRITABLE = "its lock file {lock} is not writable by this user ({user})"
# the hint of FOLDER_NOT_WRITABLE
WRITABLE_FOLDER_HINT = ("pinlib writes its lock file and the new file in that folder: use "
                        "a folder this user may write in (a copy of the files), or ask the "
                        "folder's owner")
CANNOT_WRITE_FILE = "cannot write the file: {reason}"
NOT_A_REGULAR_TARGET = ("not a regular file (a folder, a device, a pipe or a socket is "
                        "never written over)")
READ_ONLY_TARGET = "the file is read-only, and pinlib does not replace a read-only file"

# ---------------------------------------------------------------- pinlib/core/quantity.py
YES_NO_AS_QUANTITY = "a yes/no value where a quantity belongs"
BARE_NUMBER = "a bare number has no unit"
TYPE_AS_QUANTITY = "a {type} where a quantity belongs"
NOT_FINITE = "not a finite number"
UNKNOWN_UNIT = "unknown unit '{unit}'"
RKM_R_FOR_RESISTANCE = "the RKM code with R is for resistances"
WRONG_DIMENSION = "a value in {unit} where {quantity} belongs"
NOT_A_QUANTITY = "not a number with a unit"
TYPE_AS_THRESHOLD = "a {type} where a threshold belongs"
EMPTY_THRESHOLD = "an empty threshold"
NOT_A_THRESHOLD = "not a voltage or a multiple of VDD"
THRESHOLD_NOT_FINITE = "not a finite threshold"
QUANTITY_TOO_LONG = "{n} characters: too long for a quantity (at most {limit})"

# ---------------------------------------------------------------- pinlib/library/
# loader.py
NOT_A_PART_FILE = "not a part-class file"
# loader.py and design/load.py: a file with no key (empty, blank, or comments only)
FILE_HOLDS_NOTHING = "the file holds nothing (empty, or comments only)"
DESIGN_HAS_NO_BUS = "the design has no bus, so nothing would be checked"
DESIGN_HAS_NO_BUS_HINT = ("'pinlib new DESIGN --part U1=PART --part U2=PART' writes a starter "
                          "design")
DESIGN_IN_LIBRARY = ("a design file: a library folder holds part files only; keep designs "
                     "in another folder")
PART_NEEDS_ID = "a part file needs an id"
LIBRARY_FOLDER_NOT_FOUND = "library folder not found"
# folders.py and loader.py: "" as a library folder (it would read the current folder)
EMPTY_FOLDER_NAME = "an empty folder name"
# folders.py, design/load.py and loader.py: a file (a team part's) named as a library
LIBRARY_IS_A_FILE = "a file where a library folder belongs"
LIBRARY_FILE_HINT = "name the folder that holds the part files: {folder}"
# folders.py (the hint of LIBRARY_FOLDER_NOT_FOUND when a command was told to read it)
FOLDER_NAMED_BY = "{source} names it: correct or remove it there"
# loader.py: the hint of a team file that cannot be read, named as a built-in part
UNREAD_OVERRIDE = ("its name overrides the built-in part '{part}', which is not used in its "
                   "place: designs that place '{part}' are refused until this file loads")
# loader.py and partscheck.py: a part broken by a team override of a class it extends
INHERITS_OVERRIDE = ("'{part}' extends '{cls}', which the team file {file} overrides: "
                     "the override lacks or changes what '{part}' needs")
# design/resolve.py: a design's refusal of a part that a team file overrides
TEAM_OVERRIDE_PLACED = ("'{part}' here is the team part of {file}, which overrides the "
                        "built-in part of that id")
# overrides.py (warnings of `parts check`): an override that looks like a slip
OVERRIDE_OTHER_CATEGORY = ("overrides the built-in part '{part}' ({builtin}), a {was} part, "
                           "with a {now} part: every design that places '{part}' gets this "
                           "one (a copied file whose id was not changed?)")
OVERRIDE_OTHER_NAME = ("overrides the built-in part '{part}' ({builtin}) from a file named "
                       "{name}: a copied file whose id was not changed?")
DUPLICATE_TEAM_ID = "two team parts share one id"
DUPLICATE_TEAM_ID_HINT = ("neither is used until one is renamed or removed (which one is "
                          "meant is not known)")
DUPLICATE_BUILTIN_ID = "two built-in parts share one id"
EXTENDS_NOT_AN_ID = "extends names a part id"
EXTENDS_CYCLE = "an extends cycle"
EXTENDS_UNKNOWN = "extends a part that is not in the library"
# the expected text of UNKNOWN_FIELD (pinlib/library/fields.py)
EXPECTED_FIELD_OF = "a field of the {format} format here: {fields}"
MORE_FIELDS = " and {n} more"
# under a table cut to the terminal's width (pinlib/core/texttable.py)
COLUMNS_LEFT_OUT = "(not shown at this width: {columns}; a wider terminal or --json shows them)"
OVERRIDES_LEFT_OUT = "team parts that override a built-in one: {ids}"
ABSTRACT_MARKED = ("* abstract class: cannot be placed; extend it "
                   "(pinlib parts new ID --from CLASS)")
PART_DOES_NOT_VALIDATE = "part '{part}' does not load: {problem}"
# hints of PART_DOES_NOT_VALIDATE and UNKNOWN_PART
NAMED_AT = "the part is named at {where}"
MORE_PROBLEMS = "{n} more problem{s}: 'pinlib parts check' lists them"
# after the further problems the command line lists with an error (pinlib/cli)
FURTHER_PROBLEMS = "pinlib: and {n} more problem{s} in the same file"
UNREAD_FILES = "{n} library file{s} could not be read, the first: {first}"
EXTENDS_TOO_DEEP = "an extends chain deeper than {limit} levels"
LIBRARY_IS_SYSTEM_FOLDER = "a library folder may not be a system folder ({real})"
LIBRARY_TOO_DEEP = "the library folder nests deeper than {limit} folders"
LIBRARY_TOO_BIG = ("the library folder holds more than {limit:,} files and folders: a "
                   "library is a folder of part files")
LIBRARY_TOO_MANY_FILES = "the library folder holds more than {limit:,} part files"
LINK_OUT_OF_LIBRARY = "a link out of the library folder is not followed"
# records.py: a value of the wrong kind or form, in any file format declared as records
NOT_TEXT = "not text"
NOT_TRUE_OR_FALSE = "not true or false"
NOT_WHOLE_NUMBER = "not a whole number"
NOT_NUMBER = "not a number"
NOT_DATE = "not a date (YYYY-MM-DD)"
NOT_TABLE = "not a table"
NOT_ARRAY = "not an array"
NOT_TEXT_OR_TABLE = "neither text nor a table"
WRONG_KIND = "not a kind of value this field takes"
TEXT_WRONG_FORM = "text not of the allowed form"
TEXT_TOO_SHORT = "text shorter than {n} character{s}"
TEXT_TOO_LONG = "text longer than {n} characters"
# ... and what only a program using the records wrongly meets
RECORD_FROZEN = "a {record} cannot be changed in place: make a changed copy, copy({name}=...)"
RECORD_FIELD_TYPE = "a record field cannot be of type {type}"
# schema.py (its record checks)
EDGE_NEEDS_RISE_OR_FALL = "an edge point needs rise or fall (or both)"
FAST_CORNER_EMPTY = "a fast corner needs r_out or edges (or both)"
FAST_CORNER_NEEDS_PUSH_PULL = ("a fast corner belongs to a push-pull output; this pin's drive "
                               "is {drive}")
SUPPLY_MAX_BELOW_MIN = "supply max {max} is below min {min}"
SUPPLY_MIN_NOT_POSITIVE = "the supply min must be above 0 V"
EDGE_TIME_NOT_POSITIVE = "an edge time of 0 s or less"
BRIDGE_BOTH_SIDES = "a bridging part describes both sides, [sides.a] and [sides.b]"
# the 2 % is pinlib.core.quantity.LIGHT_DELAY_ROUNDING (a test holds them equal)
DELAY_FASTER_THAN_LIGHT = ("a delay per length shorter than light's in vacuum (1/c, "
                           "3.3356 ns/m) by more than a rounded figure's 2 %: no line "
                           "carries a signal faster")
CABLE_Z0_IMPOSSIBLE = ("a cable class's impedance of {z0} ({how}) is one no line has: "
                       "expected {low} to {high}")
# after LINE_VALUES_DISAGREE, where all three are given and delay / capacitance is no line's
CABLE_DISAGREE_Z0_IMPOSSIBLE = ("; and {how} is an impedance of {z0}, one no line has "
                                "(expected {low} to {high})")
# the 2 % is pinlib.core.quantity.LIGHT_DELAY_ROUNDING (a test holds them equal)
DELAY_DERIVED_FASTER_THAN_LIGHT = ("impedance x capacitance = {z} x {c} gives a delay per "
                                   "length of {delay}, shorter than light's in vacuum (1/c, "
                                   "3.3356 ns/m) by more than 2 %: no line carries a signal "
                                   "faster (the impedance or the capacitance mistyped?)")
CABLE_NEEDS_TWO_OF_THREE = ("a cable class gives its capacitance per length, or two of "
                            "capacitance, delay and impedance (each above zero)")
# values.py
VALUE_TABLE_UNKNOWN_KEY = "unknown key '{key}' in a value table"
VALUE_TABLE_WITHOUT_VALUE = "a value table without 'value'"
SOURCE_NOT_TEXT = "a source must be text"
# the expected text of OUTSIDE_RANGE for a level (docs/formats/part.md, "Levels that
# follow the supply")
LEVEL_RANGE = "a multiple of VDD within ±2 plus an offset within {lo} V to {hi} V"
# plausible.py (warnings: the part still loads)
IMPLAUSIBLE_VALUE = "an implausible value for this field"
# plausible.py, a typ beside its limit (warnings: the part still loads)
TYP_BEYOND_LIMIT = "the typical value lies beyond the limit beside it, {limit}"
TYP_SIDE_RULE = ("a typ {rel} the value, which for {field} is the {side} (one of "
                 "them mistyped, the two swapped, or a typ from other conditions than "
                 "the limit's?)")
TYP_NEED_RULE = ("a typ at most the value: {field} is the least the part must be given, and "
                 "its typical need lies at or below it (one of them mistyped, or the two "
                 "swapped?)")
PLAUSIBLE_RANGE = "{range} (common practice, no source)"
FAST_CORNER_WEAKER = "the fast corner's r_out is above the slow corner's {slow}: corners swapped?"
FAST_CORNER_RULE = "a fast corner's r_out at most the pin's own r_out (the slow corner)"
# sources.py (listed by parts check, as implausible values are)
NO_SOURCE_FOR_PART = "the file's provenance has the basis '{basis}' but no source"
SOURCE_OF_PART = ('the document its values come from (provenance = { basis = "datasheet", '
                  'source = "datasheet rev C, 2024-03" })')
NO_SOURCE_FOR_VALUE = "a value with the basis '{basis}' but no source"
SOURCE_OF_VALUE = 'the document, revision and table or page (source = "rev C, table 7.5")'
LINE_VALUES_DISAGREE = ("capacitance, delay and impedance disagree: impedance x capacitance "
                        "gives {implied} against the delay {delay} ({off})")
LINE_AGREEMENT_RULE = ("impedance x capacitance within {pct} of the delay (lossless line: "
                       "tpd = Z0 C')")
# fields.py
FIELD_PATH_NEEDED = "a field path is needed"
VALUE_FIELD_NO_SUBFIELDS = "a value field has no sub-fields"
PATH_STOPS_AT_NAMED_TABLE = "the path stops at a table of named items"
FIELD_TAKES_NO_VALUE = "this field takes no recorded value: {what}"
# pinlib parts record, after a figure that the part's title, copied from its class, states
TITLE_STATES_OLD_FIGURE = ("the title '{title}' is the one of {cls}, which this part extends, "
                           "and does not state the {field} now recorded ({value}): edit "
                           "the title line of {file} if it no longer describes the part")
FIELD_IS_YES_NO = "a yes/no setting (true or false), with no unit and no source of its own"
FIELD_IS_SETTING = "a setting, not a value with a unit, and with no source of its own"
SETTING_BY_HAND = "write it in the part file by hand: `{line}` {place}"
PATH_STOPS_BEFORE_FIELD = "the path stops before a field"
FIELD_WITHOUT_PIN = "a pin's field without its pin"
# schema.py: a part's title
TITLE_BLANK = "an empty title"
TITLE_NOT_ONE_LINE = "a title of more than one line"
TITLE_EXPECTED = "one line of text for people (e.g. 'Serial EEPROM, I2C, 1.7 to 5.5 V')"
# record.py
BUILTIN_NOT_WRITTEN = "the built-in library is not written to"
BUILTIN_NOT_WRITTEN_BECAUSE = "the built-in library is not written to ({reason})"
INVALID_PART_ID = "not a valid part id"
PART_ID_EXISTS = "a part with this id exists"
CANNOT_CREATE_FOLDER = "cannot create the folder: {reason}"
CANNOT_REMOVE_OLD_CHART = ("cannot remove this chart of an earlier report ({reason}); the new "
                           "report does not link it")
FILE_EXISTS = "the file exists"
PART_FILE_IS_FOLDER = "a folder has the name of the new part's file"
WOULD_BREAK_CHILD = "the value would break '{child}', which extends this part"
VALUE_REFUSED = "the value is refused: {problem}"
PART_WOULD_NOT_VALIDATE = "the part would not validate with this value"
PART_INVALID_ALREADY = "the part file has a problem already: {problem}"
PART_FILE_TOO_LARGE = ("the part file would hold {size:,} bytes, more than the {limit:,} "
                       "the library reads")
VALUE_WHERE_TABLE = "the file has a value where a table belongs"
VALUE_NEEDED = "a value is needed"
SOURCE_NEEDED = "every recorded value needs its source"
EMPTY_TYPICAL = "an empty typical value"
FILE_NO_LONGER_HOLDS_PART = "the file no longer holds this part"
CANNOT_KEEP_LAYOUT = "cannot set this value while keeping the file's layout"
NO_SUCH_PIN = "the part has no such pin"
PINS_ON_SIDES = "a bridging part has no pins of its own: its pins are on its sides"
SIDE_PIN_PATHS = "the file holds such a value in {tables}"
NO_SUCH_SIDE = "the part has no side '{side}'"
# loader.py: the hint of a problem of several fields, where the others were set
SET_ELSEWHERE = "beside {places}, set by a class it extends"
ONE_OF_ITS_SIDES = "one of its sides ({sides})"
NO_SIDES = "the part has no sides: only a bridging part has them"
NO_SIDES_EXPECTED = "PIN.FIELD on one of its own pins ({pins})"

# ---------------------------------------------------------------- pinlib/model/design/
NOT_A_DESIGN = "not a design file"
DESIGN_LIBRARY_MISSING = "a library folder named by the design does not exist"
LOOKED_FOR = "looked for {path}"
MICROSTRIP_NEEDS_HEIGHT = "a microstrip needs its height above the plane"
STRIPLINE_NEEDS_SPACING = "a stripline needs spacing (plane to plane) or height (to each plane)"
SPACING_NOT_ABOVE_COPPER = "the plane-to-plane spacing leaves no room for the copper"
LINE_FORMULA_NO_IMPEDANCE = "the {kind} method '{method}' gives no impedance here: {why}"
LINE_FORMULA_LOG_LIMIT = ("its Z0 has the factor {form}, which is 0 or less when "
                          "0.8·width + thickness ({wide}) is not below {factor:g}·{h} ({limit})")
LINE_FORMULA_NOT_FINITE = "its formula gives no finite positive Z0 for these dimensions"
USE_DEFAULT_LINE_METHOD = ("set method = \"{default}\" (the default: or drop the key), "
                           "which holds over {range}; '{method}' is quoted for {quoted}")
ABSTRACT_ON_BOARD = "an abstract class cannot be placed on a board"
CABLE_AS_DEVICE = "a cable class belongs in `cables` or a line's sections"
SECTIONS_OR_STRETCH = "give either sections or one stretch (length, geometry...), not both"
TRACE_NEEDS_LENGTH = "a trace needs its length"
NOT_A_CABLE = "the part is not a cable class (it has no [line] table)"
UNKNOWN_GEOMETRY = "unknown geometry"
GEOMETRY_OR_PER_LENGTH = "give a geometry or per-length values, not both"
TRACE_NEEDS_GEOMETRY = "a trace needs a geometry or its capacitance per length"
DUPLICATE_BUS_ID = "two buses share one id"
REFERENCE_TWO_PARTS = "one reference designator names two parts ({part} here, {other} before)"
REFERENCE_TWICE_ON_BUS = "one reference designator twice on one bus"
ALSO_AT = "also at {where} as {part}"
UNKNOWN_MODE = "unknown mode"
BUS_HAS_NO_MODE = "a {protocol} bus has no mode"
CLOCK_NOT_POSITIVE = "the clock must be above zero"
OPEN_DRAIN_NO_LINES = "an open-drain bus has no per-signal lines"
DEVICES_IN_SEGMENTS = "devices go in the segments when a bus has segments"
KEY_IN_SEGMENTS = "{key} goes in the segments when a bus has segments"
BUS_NEEDS_PULLUP_SUPPLY = "a bus needs its pull-up supply"
SUPPLY_NOT_POSITIVE = "the supply must be positive"
SUPPLY_TOO_LOW = "implausibly low for a logic rail"
BUS_NEEDS_CONTROLLER = "a bus needs a controller"
SPI_ONE_CONTROLLER = "a second controller on an SPI bus"
CONTROLLER_CANNOT_DRIVE = "a controller must pull {signal} low, and this part cannot"
SPI_CONTROLLER_CANNOT_DRIVE = ("an SPI controller drives {signal} as a push-pull output, "
                               "and this part's pin cannot")
SEGMENT_NOT_JOINED = ("no bridging part joins this segment to the controller's: "
                      "nothing clocks its lines")
BRIDGE_NEEDS_SIDE = "a bridging part names its side in each segment"
SIDE_ONLY_FOR_BRIDGE = "only a bridging part has sides"
# [[coupling]] tables (pinlib/model/design/coupling.py)
DID_YOU_MEAN = "did you mean '{name}'?"
COUPLING_NAMES_A_LINE = "a coupling names a line as BUS.SIGNAL"
COUPLING_UNKNOWN_BUS = "no bus with this id"
COUPLING_WRONG_FAMILY = "this end of a coupling must be {family}"
COUPLING_UNKNOWN_SIGNAL = "bus {bus} has no such signal"
COUPLING_UNKNOWN_SEGMENT = "bus {bus} has no such segment"
COUPLING_TWICE = "the same two lines are coupled twice"
COUPLING_VICTIM_UNDRIVEN = "no device pulls the victim line low on segment {segment}"
COUPLING_LONGER_THAN_LINE = "the parallel run is longer than the shorter of its two lines"
NO_COUPLING_WORKINGS = "not a coupling result with the engine's workings"
NO_SUCH_COUPLING = "the design has no such [[coupling]]"
TOO_MANY_COUPLED_STEPS = ("solving this run in time would take {steps:,} time steps "
                          "(at most {limit:,})")
PART_LACKS_PIN = "the part has no {function} pin"
PART_LACKS_PIN_ON_SIDE = "the part has no {function} pin on side {side}"
BRIDGE_IN_TWO_SEGMENTS = "a bridging part must appear in two segments, once per side"
BUS_HAS_NO_SEGMENTS = "a {protocol} bus has no segments"
BUS_HAS_NO_KEY = "a {protocol} bus has no {key}"
# keys a protocol does not use, each refused where it is written with where it belongs
KEY_BELONGS_ON_LINE = "{key} of an SPI or GPIO bus belongs on a line: lines.<signal>.{key}"
TRACE_BELONGS_ON_LINES = ('an SPI or GPIO bus routes each signal as a line of its own: '
                          'lines.<signal> = { length = "10 cm", geometry = "NAME" }')
LINE_KEY_NOT_OPEN_DRAIN = "only an SPI or GPIO line takes {key}"
SERIES_RESISTOR_ON_DEVICE = ("series_resistor of an I2C or SMBus bus belongs on a device: "
                             "devices[N].series_resistor, between its pin and the bus")
EXTRA_CAPACITANCE_BESIDE_TRACE = ("extra_capacitance of an I2C or SMBus bus belongs beside "
                                  "its trace: the bus's (or segment's) extra_capacitance")
SPI_MODE_NOT_SPI = "only an SPI bus takes an spi_mode"
DEVICE_KEY_NOT_PUSH_PULL = "only a device on an I2C or SMBus bus takes {key}"
SERIES_RESISTOR_ON_LINE = ("series_resistor of an SPI or GPIO bus belongs on a line, at its "
                           "driver: lines.<signal>.series_resistor")
SWITCHED_NOT_CHECKED = ("the power-off check is made on I2C and SMBus buses only; leave "
                        "switched out")
CAPACITANCE_ZERO_WITH_DELAY = "a stretch with a delay per length needs a capacitance above 0"
LINE_Z0_IMPOSSIBLE = ("the delay and capacitance per length give an impedance of {z0} "
                      "(delay / capacitance), which no board trace or cable has")
LINE_Z0_EXPECTED = ("delay / capacitance between {low} and {high}: at {delay} "
                    "a capacitance of {c_low} to {c_high}")
IMPEDANCE_IS_DELAY_OVER_C = ("its impedance is delay / capacitance: a line of no capacitance "
                             "and a delay would have an infinite one")
LINE_PULLUP_NOT_GPIO = "only a GPIO or SPI line takes a pullup"
LINE_PULLUP_TOLERANCE_ALONE = "a pullup_tolerance needs the line's pullup"
DEVICE_PIN_NOT_GPIO = "only a device on a GPIO bus takes a pin"
GPIO_DEVICE_ON_NO_LINE = "the device is on no line of its GPIO bus"
GPIO_PIN_NAMES_NO_LINE = "on a GPIO bus of several lines a device's pin names the line it is on"
BUS_NEEDS_SUPPLY = "a bus needs its supply"
UNKNOWN_SPI_SIGNAL = "unknown SPI signal"
SPI_NEEDS_CLOCK = "an SPI bus needs its clock"
SPI_NEEDS_SCLK = "an SPI bus needs its SCLK routing"
# the limits of pinlib/core/worklimits.py
TOO_MANY_DEVICES = "too many devices on one {protocol} bus"
TOO_MANY_SECTIONS = "too many sections on one trace"
ROUTE_OR_STRETCH = "give either a route or a stretch (length, sections...), not both"
ROUTE_ON_OPEN_DRAIN = "an open-drain bus's trace takes no route"
TOO_MANY_ROUTE_STRETCHES = "too many stretches in one route"
ROUTE_EMPTY = "a route with no stretch"
POINT_NAME_CONTROL = "a route point named with a line break or a control character"
ROUTE_CLOSES_LOOP = "this stretch closes a loop in the route: its two points are already joined"
ROUTE_NOT_CONNECTED = "this stretch joins nothing of the rest of the route"
ROUTE_MISSES_DEVICE = "a device on the line is at no point of its route"
ROUTE_DEVICE_NOT_ON_LINE = "the point names a device of the bus that is not on this line"
ROUTE_DEVICE_OF_OTHER_BUS = "the point names a device of another bus, not of this one"

# ---------------------------------------------------------------- pinlib/cli/commands/
NO_FOLDER_FOR_NEW_PART = "no folder to write the new part into"
PART_DOES_NOT_LOAD = "the part does not load"
PIN_SET_INCOMPLETE = ("pins of {protocols} ({have}) but no {lack} pin: the part cannot be "
                      "placed on such a bus")
PIN_SET_RULE = "every device on such a bus to have {needs}"
OPEN_DRAIN_NO_SINK_POINT = ("an open-drain pin without {missing}: its low level and sink "
                            "current are checked against no rating of the part")
SINK_POINT_RULE = "v_ol and i_ol, the datasheet's low level at a sink current"
IBIS_GIVE_I_OL = "--i-ol CURRENT reads v_ol from the model's [Pulldown] table at that current"
# walk.py, notes of `parts check`: names that look like part files and are not read
TOML_NAME_NOT_LOWER = ("not read: a part file's name ends in .toml in lower case (rename "
                       "it to be read)")
TOML_NAMED_FOLDER = ("a folder, not a part file: it is walked as a subfolder, its own "
                     "*.toml files read")
PART_CHECKS_WAIT = ("some checks of this part (between its fields, of the part as a whole) "
                    "could not run: they need the problems listed for it fixed first")
LIBRARY_HAS_PROBLEMS = ("{n} problem{s} in the library (run 'pinlib parts check'); parts "
                        "with problems are left out")
FIRST_PROBLEM = "the first: {message}"
OVERRIDE_HIDES_BUILTIN = ("the built-in {id} is out too: a team file that does not load "
                          "overrides it, and every part that extends it is out with it")
INTERRUPTED = "interrupted (Ctrl-C): stopped"
SUBSTITUTION_FORM = "a substitution is REF=PART"
SUBSTITUTED_TWICE = "one reference substituted twice"
DESIGN_CHANGED_DURING_SWAP = ("the design file changed while it was being evaluated; "
                              "nothing written")
# pinlib swap and the swap workbook: a refused substitution (the reasons follow, one a line)
SWAP_REFUSED = "{ref} = {new} refused: {new} cannot serve the position of {old}"
ABSTRACT_NOT_PLACED = "{part} is an abstract class, meant to be extended, not placed"
CABLE_NOT_PLACED = "{part} is a cable class; it belongs in cables or a line's sections"
DESIGN_NOT_CHANGED = "{path} was not changed"

# ---------------------------------------------------------------- commands new, schema,
# check and swap over many designs, parts used-by
PLACEMENT_FORM = "a placement is REF=PART"
REF_PLACED_TWICE = "one reference placed twice"
NEW_FILE_EXISTS = "the file exists; 'pinlib new' does not overwrite a file"
NO_BUS_FOR_PARTS = "no two of these parts share a protocol, so no bus can be written"
NO_DESIGN_MATCHES = "no design file matches this pattern"
USED_BY_FOLDER_REFUSED = ("without design files named, the current folder is searched, "
                          "but not this one: {reason}")
NOT_A_LIBRARY_PART = "no part of the library has this id"
# folders.py: where team parts were looked for (the hint of an id not found)
TEAM_FOLDERS_READ = "team folders are read from PINLIB_LIBRARY ({env}) and --library ({given})"
DESIGN_LIBRARY_NOT_READ = ("a design's own library line counts only where the design is read: "
                           "give its folder with --library")
DESIGN_LIBRARIES_READ = "and the library lines of the designs searched ({n})"
# an unknown part of a design: where its team parts were looked for
DESIGN_TEAM_FOLDERS = "team folders read: {folders}"
NO_TEAM_FOLDERS = "none (PINLIB_LIBRARY, the design's library line and --library name none)"
DESIGN_NOT_LOADED = "{path}: not checked: {message}"
SCHEMA_KIND = "no schema of this kind"
ONE_DESIGN_ONLY = "this option takes one design at a time"
#: A change list's line for a resistor pinlib chose ("auto") that it chose anew.
AUTO_RESISTOR_CHANGED = ("{where}: the automatic {what} is now {new}, not {old}: pinlib "
                         "chose another resistor to fit, a change to the bill of materials")
SWAP_NEEDS_SUBSTITUTION = "no substitution given"
SWAP_PART_FORM = "a substitution over designs is OLD=NEW (two part ids)"
SWAP_FORMS_MIXED = "REF=PART and --part OLD=NEW cannot be mixed"

# ---------------------------------------------------------------- engines: plain numbers
# shared by pinlib/standards/*, pinlib/core/eseries.py and pinlib/physics/*
NOT_A_NUMBER = "not a number"
MUST_BE_FINITE_NON_NEGATIVE = "value must be finite and not negative"
UPPER_NOT_ABOVE_LOWER = "upper level must be above the lower level"
# pinlib/standards/
SUPPLY_NOT_POSITIVE_FINITE = "supply voltage must be positive and finite"
UNKNOWN_I2C_MODE = "unknown I2C mode"
NOT_AN_I2C_LIMIT = "not an I2C mode limit"
UNKNOWN_LOGIC_LEVELS = "unknown logic-level set"
UNKNOWN_SMBUS_CLASS = "unknown SMBus class"
NOT_AN_SMBUS_LIMIT = "not an SMBus class limit"
SUPPLY_BELOW_SMBUS_POINTS = "supply too low for the SMBus rise-time points"
# pinlib/core/eseries.py
UNKNOWN_NUMBER_SERIES = "unknown preferred-number series"
VALUE_OUT_OF_RANGE = "value out of range"
BOUND_NOT_SINGLE = "bound must be a single number"
LOWER_ABOVE_UPPER = "lower bound above upper bound"
UNKNOWN_ROUNDING = "unknown rounding rule"
# pinlib/physics/rc.py
FRACTION_OUT_OF_RANGE = "fraction of the final value out of range"
MUST_BE_FINITE_POSITIVE = "value must be finite and positive"
SUPPLY_BELOW_UPPER_LEVEL = "supply does not reach the upper measuring level"
LOW_LEVEL_NOT_BELOW_SUPPLY = "low level is not below the supply"
# pinlib/physics/pullup.py
MUST_BE_POSITIVE = "value must be positive"
NO_RESISTANCES = "no resistances given"
MUST_NOT_BE_NEGATIVE = "value must not be negative"
CLOCK_PERIOD_ZERO = "the clock period is zero"
LEVELS_OUT_OF_RANGE = "measuring levels out of range"
LEVELS_TOO_CLOSE = "measuring levels too close together"
LEVELS_APART = ("HI at least {apart} of the rail above LO (closer, an error in either "
                "level swamps the capacitance the rise gives; common practice)")
BENCH_RISE_RANGE = ("a rise between {lo} and {hi} (an oscilloscope reads no faster edge, "
                    "and no bus edge is slower; common practice)")
BENCH_PROBE_RANGE = "a probe of at most {hi} (common practice: a 1x probe is about 100 pF)"
RISE_FASTER_THAN_PROBE = "the measured rise is faster than the probe alone allows"

# pinlib/physics/waveform.py
UNKNOWN_EDGE = "unknown edge"
TIME_NOT_1D = "time must be a 1-D array of at least two samples"
SAMPLES_NOT_ON_TIME_AXIS = "waveform samples do not match the time axis"
EDGE_NO_SWING = "edge has no swing"
EDGE_LEVELS_OUT_OF_ORDER = "edge levels out of order"
VIH_NOT_ABOVE_VIL = "VIH must be above VIL"
NEGATIVE_SOURCE_OR_LOAD = "source resistance and load capacitance must not be negative"
TIME_GRID_FORM = "time grid must be 1-D, start at 0 and hold at least two samples"
TIME_GRID_NOT_UNIFORM = "time grid must be uniform and increasing"
# a ValidityWarning, not an error
DELAY_ROUNDED = ("sections[{k}].td = {td} s rounded to {steps} steps of {dt} s ({rounded} s); "
                 "use a time step that divides the delay")
SECTION_NOT_A_PAIR = "a line section must be a pair (z0, td)"
Z0_NOT_POSITIVE = "characteristic impedance must be positive"
SECTION_DELAY_FORM = "section delay must be one number >= 0"
TIME_STEP_TOO_COARSE = "time step too coarse for a line section"
MID_JUNCTION_OUT_OF_RANGE = "junction for c_mid out of range"
BATCH_SHAPES_CLASH = (
    "{first} of shape {a} and {second} of shape {b} do not broadcast into one batch")
# pinlib/physics/waveform/tree.py
TREE_SECTION_FORM = "a section of a tree must be (a, b, z0, td): two nodes, impedance, delay"
NODE_INDEX_OUT_OF_RANGE = "not a node of the tree"
NODE_CAPS_FORM = "node capacitances must be a sequence with one value per node"
TREE_LOOP = "this section closes a loop: the sections must form a tree"
TREE_NOT_CONNECTED = "the sections do not join every node"
# pinlib/physics/lines.py
PARAMETER_NOT_A_NUMBER = "parameter '{name}' is not a number"
PARAMETER_OUT_OF_RANGE = "parameter '{name}' is out of range"
UNKNOWN_LINE_METHOD = "unknown {kind} method"
SHAPES_DO_NOT_BROADCAST = "parameters w, h/b, er, t have shapes that do not broadcast"
UNKNOWN_LINE_KIND = "unknown line kind"
# a ValidityWarning, not an error
OUTSIDE_VALIDITY = ("{kind} method '{method}': {quantity} outside {range} in {count} of "
                    "{size} (e.g. {quantity} = {first}); source: {source}")
# a ValidityWarning, not an error: a method that holds at one value only (t = 0)
OFF_VALIDITY_POINT = ("{kind} method '{method}' holds only at {range}: {quantity} "
                      "differs in {count} of {size} (e.g. {quantity} = {first}); "
                      "source: {source}")
# a ValidityWarning, not an error: Cohn's stripline formula given a thickness, which it
# cannot count ({count}: "" for one geometry, " (in 2 of 4)" for arrays)
COHN_THICKNESS_IGNORED = ("stripline method 'cohn' is exact for a strip of zero "
                          "thickness: thickness {thickness} is not taken into "
                          "account{count}, so Z0 {z0} is the zero-thickness strip's "
                          "(method 'wheeler', which counts the thickness, gives "
                          "{z0_wheeler}); use 'wheeler' for a strip of finite thickness; "
                          "source: {source}")

# pinlib/physics/driver.py
NOT_NUMBERS = "not a number or an array of numbers"
UNKNOWN_MEASURING_LEVELS = "unknown measuring levels"
NO_EDGE_POINTS = "no edge points"
LENGTHS_DIFFER = "{a} and {b} differ in length"
DRIVER_NEEDS_PUSH_PULL = "a driver model needs a push-pull pin"
# FitWarning texts of fit_driver, not errors (times, loads and resistances come filled in
# with their SI prefix, "2.2 ns"; levels as "10-90"; tolerances as "5%")
FIT_EDGE_FALLS_WITH_LOAD = ("{levels} % edge time falls as the load rises ({time_a} at "
                            "{load_a}, {time_b} at {load_b}): no positive r_out fits these "
                            "points")
FIT_R_OUT_TO_ZERO = ("the best fit drives r_out to zero ({r_out}): the edge time hardly grows "
                     "with load, so these points support no positive r_out")
# pinlib/library/plausible.py: an r_out the pin's own edge points contradict
R_OUT_SLOWER_THAN_EDGES = ("alone it gives a {levels} % {direction} of {model} into {load}, "
                           "slower than the {time} the pin's edges state there")
R_OUT_EDGES_RULE = ("an r_out whose RC edge into each stated load (ln 9 · r_out · C for 10-90 %) "
                    "is no slower than the edge stated there: record r_out and the edges from "
                    "the same datasheet, or leave r_out out and let the edges set it")
FIT_R_OUT_ALONE_TOO_SLOW = ("r_out {r_out} alone gives {model} at {load}, slower than the "
                            "datasheet's {time} with no ramp at all")
FIT_POINTS_DO_NOT_FIT = ("the points do not fit the driver model within {tolerance}: at {load} "
                         "({levels} %) the model gives {model} against {time}")
FIT_R_OUT_POORLY_DETERMINED = ("r_out is poorly determined by these points: a {tolerance} error "
                               "in the edge times moves it by about {spread} (r_out C is small "
                               "against t_ramp at every load, or the loads are too close)")
FIT_TWO_DRIVERS = ("the points fit two drivers within {tolerance}: r_out {r_out} with t_ramp "
                   "{t_ramp}, and r_out {other_r_out} with t_ramp {other_t_ramp}; the first is "
                   "used")

# ---------------------------------------------------------------- bus engines
# pinlib/engines/limits.py, opendrain.py, pushpull.py, pushline/
NOT_OPEN_DRAIN_BUS = "not an open-drain bus"
NOT_PUSH_PULL_BUS = "the push-pull engine evaluates spi and gpio buses"
NO_DRIVER_ON_LINE = "no device drives this line"
#: An SMBus line on a rail whose minimum does not exceed the rise's upper measuring
#: point (VIH,min + 0.15 V): it never gets there (pinlib/engines/opendrain/wording.py).
RISE_ABOVE_RAIL = ("{line} never rises to {level}, where its rise time ends: the "
                   "rail's minimum {vdd} does not reach it")
RISE_ABOVE_RAIL_FIX = ("a rail whose minimum stays above {level} (a higher supply or "
                       "a tighter tolerance)")
#: Figures a rise that never completes leaves without a value (wording_segment.py).
RISE_NONE_RAIL = "none: {line} never rises to {level}, above the rail's minimum {vdd}"
RISE_FACTOR_NONE = "none: the rail's minimum {vdd} does not exceed {level}"
RP_MAX_NO_RISE = "no upper bound from the rise: it never reaches {level} (see Rise time)"
SETUP_NO_RISE = ("SDA data setup: none, SDA never rises to {level}, where its rise time "
                 "ends (see Rise time), against tSU;DAT {limit}")
#: A candidate's edge figure that is infinite (pinlib/studies/candidates.py).
FIGURE_EDGE_NEVER_ENDS = "the line never reaches the level its edge ends at (see its check)"
LINE_HELD_LOW = ("{signal}'s pull-up {rp} (as evaluated, within its tolerance) "
                 "against the pins' leakage {leak} would drop {drop}, more than "
                 "the {rail} rail: the line never rises")
# pinlib/engines/dispatch.py: hints naming where an error an engine met comes from
THRESHOLDS_INVERTED = ("v_il {v_il} lies above v_ih {v_ih} at every supply: no input "
                       "reads that way (the two swapped, or a slip?)")
THRESHOLDS_INVERTED_AT_RAIL = ("its pin {pin} has v_il {v_il} above v_ih {v_ih} on this "
                               "device's {rail} rail: no input reads that way")
OUTPUT_LEVELS_INVERTED_AT_RAIL = ("its pin {pin} has v_oh {v_oh} at or below v_ol {v_ol} on "
                                  "this device's {rail} rail: no output drives that way")
F_MAX_NOT_POSITIVE = "a maximum clock of 0 Hz allows no clock at all"
SPI_MODES_BAD_LIST = ("a list of the SPI modes the part works in, each once (an empty "
                      "list would allow none)")
SPI_MODE_NOT_0_TO_3 = "an SPI mode is a whole number from 0 to 3 (CPOL·2 + CPHA)"
#: The hint of a TOML file that ends inside a value, a table or an array.
TOML_ENDS_EARLY = ("the file ends in the middle of something written on or before this "
                   "line (a value, an array, an inline table): it may have been cut short")
#: The heading of an SPI bus's flights in ``pinlib check --detail``.
FLIGHTS_HEAD = ("flights: from the driver's timing reference (its output at 50 % of its "
                "supply into its test load) to the receiver's VIL(max) or VIH(min), "
                "earliest and latest, as the timing checks above take them (—: no "
                "check takes that end, or the receiver never crosses its threshold)")
#: Why a candidate's worst margin is "—" where a yes/no check (power-off, a supported SPI
#: mode) sets its status.
WORST_YES_NO = "a yes/no check, which has no margin, sets the status"
STATUS_SET_ELSEWHERE = ("† {status} set by {check}: a check no part at {ref} can move "
                        "(pinlib check shows it)")
# Under a candidate ranking (or the corners' table) where a row warns at a negative
# margin
CANDIDATE_WARN_BEYOND = ("WARN at a negative margin: beyond a limit that is a class's "
                         "typical value, an estimate or a rule of thumb, which warns "
                         "(pinlib check says which); record the datasheet's values to "
                         "make it firm")
#: A note on an I2C/SMBus line: pins whose stated sink guarantees less current at the
#: specification's VOL than the specification asks of every device.
SINK_BELOW_SPEC = ("sink rated below the specification's {rule} ({source}): the pull-up "
                   "window follows each pin's own rating, but the part itself does not meet "
                   "the specification (a pull-up sized to the specification, on a module or "
                   "another board, may be too strong for it)")
#: A bus's capacitance_tolerance drawn low on a push-pull line: the inductance held, the
#: delay falls with the square root of the capacitance.
BOARD_C_FASTER_THAN_LIGHT = ("a board capacitance {low} below the stated one would carry an "
                             "edge along {label} faster than light (the inductance per length "
                             "held, the delay falls with the square root of the capacitance)")
BOARD_C_TOLERANCE_AT_MOST = "a capacitance_tolerance of at most {most} on this bus's lines"
BOARD_C_TOLERANCE_BELOW_ALL = "a capacitance_tolerance below 100 %"
LEVEL_BELOW_GROUND = "an output low level below ground at this rail"
LEVEL_BELOW_GROUND_EXPECTED = ("a level at or above 0 V; it resolves to {level} at VDD {vdd} "
                               "(write it in volts, or relative to a supply it suits)")
PIN_VALUE_AT_SUPPLY = "{part} as {ref} on bus '{bus}' at its supply {vdd} ({where})"
MET_EVALUATING_BUS = "met evaluating bus '{bus}', in the value '{field}' computed from it"
TOO_MANY_TIME_STEPS = "the line's waveform would need {steps} time steps (at most {limit})"
# a ValidityWarning of a trace model given again with the geometry it is about
GEOMETRY_WARNING = "geometry '{name}': {text}"
NO_FINITE_RECORD = ("the line's waveform has no finite length: a section's delay or impedance "
                    "is not a number")
# pinlib/engines/spi/
UNKNOWN_SPI_MODE = "unknown SPI mode"
NEGATIVE_PERIOD_COEFFICIENT = "a margin's period coefficient must not be negative"
CONTROLLER_LACKS_PUSH_PULL_PIN = "the controller has no push-pull {function} pin"
ZERO_LENGTH_NOT_SCALED = "a line of zero length cannot be scaled"
NO_SUCH_PERIPHERAL = "no such peripheral on the bus"
NO_T_VALID_TO_VARY = "the peripheral records no t_valid to vary"
# a timing check whose available time rests on the CS lead (lag) pinlib assumes for a
# controller that records none: its source and its fix, and the highest clock it sets
CS_TIMING_ASSUMED = ("the time available rests on an assumed {what}: {assumption}; the "
                     "controller's {field} from its datasheet makes this a full check")
CS_TIMING_ASSUMED_FIX = ("record the controller's {field} (its {what}) from its datasheet: "
                         "half a clock period is assumed in its place")
# pinlib/engines/spi/evaluate.py, on a bus with tolerances (pinlib/engines/ppworst.py):
# the figures max_clock and max_clock_edge_rule are the lowest over the corners, and
# their notes give that number, the board as designed's beside it
CLOCK_AT_WORST_CORNER = ("highest clock {low} at the worst corner of the tolerances "
                         "({nominal} as designed{nominal_by}): what the timing budget and "
                         "the parts' f_max allow there, set by {by}")
EDGE_RULE_AT_WORST_CORNER = ("highest clock by the edge rule of thumb {low} at the worst "
                             "corner of the tolerances ({nominal} as designed, set by "
                             "{line}): every {edges} keeps within {percent} % of the period "
                             "up to it; it warns, it does not limit")
# pinlib/present/values.py: after what sets the highest clock, in the summary line and
# the figure "Highest clock set by" ({what}: "CS lead", "CS lag")
SET_ON_ASSUMED_CS = ", on an assumed {what}"
CLOCK_ON_ASSUMED_CS = ("which rests on the {what} assumed for {ref} (half a clock period: "
                       "it records no {field}); {ref}'s {field} from its datasheet makes "
                       "the figure a full one")

# The fix of a failing or warning check (Check.fix, printed after "fix:" on its line).
# pinlib/engines/spi/evaluate.py: a part's f_max, and a timing term the clock moves
F_MAX_FIX = ("lower the bus clock to {f_max} or less, or use a part rated for {clock} in "
             "{ref}'s place")
TIMING_CLOCK_FIX = "lower the bus clock to {clock} or less, where this check passes"
# ...what else would give the term its time (appended to TIMING_CLOCK_FIX)
TIMING_COPI_SETUP_ALT = ("; or less delay to {ref}: the controller's t_valid {t_valid} and "
                         "COPI's flight {copi}")
TIMING_CIPO_SETUP_ALT = ("; or a shorter round trip: SCLK out {sclk}, {ref}'s t_valid "
                         "{t_valid}, CIPO back {cipo}")
TIMING_BRIDGES_ALT = ", bridging parts {bridges}"
# a term whose time the clock does not move: the controller's recorded CS lead or lag
TIMING_CS_LEAD_FIX = ("the clock does not move this check: it passes with a CS lead of "
                      "{need} or more from the controller (its t_cs_setup: {lead})")
TIMING_CS_LAG_FIX = ("the clock does not move this check: it passes with a CS lag of {need} "
                     "or more from the controller (its t_cs_hold: {lag})")
# pinlib/engines/pushline/: overshoot and undershoot a series resistor may damp
SWING_FIX_AUTO = ("set lines.{signal}.series_resistor = \"auto\": a source termination of "
                  "Z0 - r_out ({rs}) damps the reflections (it slows the edges too: recheck "
                  "the timing)")
SWING_FIX_AUTO_SECTIONS = ("set lines.{signal}.series_resistor = \"auto\": a source "
                           "termination of Z0 - r_out (of the section that damps best) "
                           "damps the reflections (it slows the edges too: recheck the "
                           "timing)")
SWING_FIX_VALUE = ("a series resistor of about Z0 - r_out, {rs} "
                   "(lines.{signal}.series_resistor = \"{rs}\"): \"auto\" fits none on a "
                   "short line where no overshoot, undershoot or ringing check fails")
SWING_FIX_LARGER = ("a series resistor above the line's {rs} "
                    "(lines.{signal}.series_resistor; it slows the edges too, so recheck "
                    "the timing), a driver with slower edges, or shorter stubs")
SWING_FIX_MATCHED = ("a driver with slower edges, or a shorter line and stubs: the driver's "
                     "{r_out} already matches Z0 {z0}, so a series resistor adds little")
SWING_FIX_NO_SERIES = ("a shorter line and stubs, or a driver with slower edges (a series "
                       "resistor needs a push-pull driver, and none drives this line)")
# pinlib/engines/pushline/sichecks.py: the edge against a fraction of the clock period
EDGE_TIME_FIX = ("lower the bus clock to {clock} or less, where this check passes, or "
                 "speed the edge (a stronger driver, less load)")
# pinlib/engines/pushline/sichecks.py: a driver's level against a receiver's threshold
# pinlib/engines/opendrain/wording.py: the sink current of a driver on its own rail is
# taken at that rail's minimum (its smallest VOL/IOL draws the most)
SINK_OWN_RAIL_LOW = ", its own {vdd} rail at its minimum"
# ...: a pull-up below the largest Rp(min) of a firm sink point where the window's Rp(min)
# rests on a soft one: it fails against the firm bound
WINDOW_BELOW_FIRM = ("; below {limit}, Rp(min) of {driver}'s sink point ({basis}), a firm "
                     "limit")
# pinlib/engines/opendrain/wording.py: rise-time and fall-time of a line joined to another
# segment through a pass-transistor translator while the transistor conducts
EDGE_JOINED = ("joined through {via} with segment {far} below {v_join} (side a's rail less "
               "VGS(th)): Cb {cb} + {cb_far}, its pull-up {rp_far} too")
# ...: the reason of a fall-time check whose joined line never reaches its end level
FALL_JOINED_NEVER = ("{up} never falls to {v_lo}, where its fall time ends: {via} conducts "
                     "only below {v_join}, where the sink cannot carry both segments' "
                     "pull-ups")
# ...: the reason of a fall-time check of a static-offset side, whose low sits at its
# offset at or above the fall's end level
FALL_OFFSET_NEVER = ("{up} never falls to {v_lo}, where its fall time ends: {driver} holds "
                     "its low at {level}, its static offset (or where the pull-up's current "
                     "past its IOL holds it)")
# ...: the fix of that check
FALL_OFFSET_FIX = ("a bridging part whose offset low sits below {v_lo}, or this one turned "
                   "round (its offset side away from this segment)")
# ...: the fix of a joined line that never falls to its end level
FALL_JOINED_NEVER_FIX = ("a MOSFET with a lower gate threshold at {via}, a stronger sink or "
                         "larger pull-ups")
# ...: the fix of a failing fall time of a joined line
FALL_JOINED_FIX = ("; or, across {via}, less capacitance on either segment or a MOSFET with "
                   "a lower gate threshold (it joins them sooner)")
# ...: a fall of a joined line that fails only with the translator's threshold at its
# soft (a class's typical, an estimated) maximum and passes at its typical value
FALL_JOINED_SOFT = (" (it fails only with {ref}'s gate threshold VGS(th) at {vth}, {basis}; "
                    "at its typical {typ} it passes: a warning, not a failure; recording "
                    "{ref}'s VGS(th) makes it firm)")
# ...: the rise of such a line above the join level
RISE_ALONE_ABOVE = "; alone above it"
# pinlib/engines/opendrain/wording_segment.py: bridge-gate-side, a pass-transistor
# translator whose side a (gate, source and body) is on a higher rail than its side b
GATE_SIDE_SOURCE = ("physics: the n-MOSFET's body diode, from its source and body (side a) "
                    "to its drain (side b), and its gate on side a's rail")
GATE_SIDE_OK = "{ref} side a (gate and source) on {va}, side b on {vb}"
GATE_SIDE_BAD = ("{ref} is fitted backwards: side a (gate and source) is on {va}, above side "
                 "b's {vb}; the body diode from side a to side b conducts (and the channel, "
                 "its gate on the higher rail): side b's lines idle about a diode drop below "
                 "{va}, above their own rail, and feed current into the {vb} rail and the "
                 "pins on it")
GATE_SIDE_FIX = ("swap {ref}'s sides: side a on the {vb} segment (the lower rail), side b on "
                 "the {va} segment")
# ...: supply-range of a pass-transistor translator's side: the side takes its segment's
# rail (its terminal is on the bus line), so its own rail is no fix
SUPPLY_RANGE_MOSFET_FIX = ("{ref}'s side takes its segment's rail (its transistor terminal is "
                           "on the bus line): fit side a on the lower rail and side b on the "
                           "higher, or choose a translator for these rails")
# pinlib/engines/opendrain/wording_segment.py: setup-time where the data valid time taken
# is a part's soft value (its limit, tSU;DAT, is the specification's: the check stays firm)
SETUP_SOFT_VALID = ("; {which} {value} is {kind} (the limit is firm: the specification's "
                    "tSU;DAT); recording the part's {field} makes the number its own")
SETUP_SOFT_GENERIC = "a value typical of {ref}'s class"
SETUP_SOFT_ESTIMATE = "an estimate for {ref}"
# pinlib/engines/opendrain/wording_segment.py: bridge-offset's fix, where a static-offset
# side's low ({offset}) is above a receiver's VIL on that side ({kind}: the bridge's kind,
# "repeater", "isolator"; {rail}: the rail at which 0.3·VDD reaches the offset)
BRIDGE_OFFSET_FIX = ("every device on the offset side must read {offset} as low: put "
                     "devices whose VIL is above {offset} there, or turn the {kind} so its "
                     "offset side faces devices with VIL = {scale:g}·VDD on a rail above "
                     "{rail}")
# ...on an SMBus segment, whose levels are fixed ({vil}: the specification's VIL): no
# higher rail raises a VIL; an offset at or below it, SMBus-level devices read
BRIDGE_OFFSET_FIX_SMBUS = ("every device on the offset side must read {offset} as low: put "
                           "devices with SMBus levels there (VIL {vil}) in place of those "
                           "with a VIL below {offset}, or turn the {kind} so its offset "
                           "side faces such devices")
# ...an offset above the specification's VIL, which no SMBus-level device is sure to read
BRIDGE_OFFSET_FIX_SMBUS_HIGH = ("an SMBus device is sure to read a low only below {vil}: "
                                "replace the {kind} by one whose offset low is below that, or "
                                "turn it so its offset side faces devices whose VIL is above "
                                "{offset}")
# bridge-offset-facing: two static-offset sides on one segment, one's low ({x} drives
# {off}) against the other's input threshold ({y}'s VIL {vil}); each direction worded
FACING_SOURCE = ("{x}'s offset low against {y}'s VIL: {offset_source}; VIL from "
                 "{vil_source}")
FACING_NEITHER = ("neither reads the other's offset low as a low ({y}'s VIL {vil} is "
                  "under {x}'s offset {off}, {x}'s VIL {vil2} under {y}'s {off2}): a low "
                  "does not pass from one to the other")
FACING_ONE_WAY = ("{y} reads {x}'s offset low {off} as a driven low (its VIL {vil} is "
                  "above it), but {x} reads a low only below its VIL {vil2}, under {y}'s "
                  "offset {off2}: a low from {y} does not pass {x}")
FACING_LOCK = ("each reads the other's offset low as a driven low ({x} {off} against "
               "{y}'s VIL {vil}, {y} {off2} against {x}'s VIL {vil2}) and holds it: "
               "the bus locks low")
FACING_UNSTATED = "{x} states no offset level (sides.{side}.low_offset)"
FACING_FIX = ("never join two static-offset sides: turn one {kind} round or use one "
              "without an offset on this side")
# pinlib/engines/opendrain/wording_segment.py: power-off of a switched device whose part
# states no off_tolerant for some pins ({fields}: pins.<pin>.off_tolerant, a bridging
# part's sides.<s>.pins...): what its pins are taken as, in place of "its pins are not
# power-off tolerant"; and what it adds after its fix (a warning, not a failure)
POWER_OFF_TAKEN = ("{part} states no {fields}, so its pins are taken as "
                   "clamped to its rail")
POWER_OFF_UNSTATED = (" (no statement, a rule of thumb: a warning, not a failure; record "
                      "the datasheet's value there, true where the pins do not load the bus "
                      "while the part is unpowered, else false)")
# ...its source where some pin's off_tolerant is not stated ({fields} as above)
POWER_OFF_SOURCE_UNSTATED = "{part} {fields}: not stated"
# A check whose limit is a class's typical value or an estimate, where it would fail
# (model.result.soften): appended to its message
SOFT_LIMIT_GENERIC = (" (the limit is a value typical of the part's class, not its "
                      "datasheet's: a warning, not a failure; recording {whose} {what} "
                      "makes it firm)")
SOFT_LIMIT_ESTIMATE = (" (the limit is an estimate, not a datasheet's: a warning, not a "
                       "failure; recording {whose} {what} makes it firm)")
LEVEL_HIGH_FIX = ("a receiver whose VIH is at most {v_ih}, or a driver whose VOH is at least "
                  "{v_oh}, where this check passes")
# ...where no driver on its rail could give that VOH (it lies above the driver's supply)
LEVEL_HIGH_FIX_RECEIVER = "a receiver whose VIH is at most {v_ih}, where this check passes"
LEVEL_HIGH_PULLUP_FIX = ("the line rises only to {v_high} through its pull-up, and this check "
                         "passes from {v_oh}: a smaller pull-up (the pins' leakage drops "
                         "less across it), or one to a higher rail that every pin on the "
                         "line is rated for")
LEVEL_LOW_FIX = ("a receiver whose VIL is at least {v_il}, or a driver whose VOL is at most "
                 "{v_ol}, where this check passes")
# ...where no receiver on its rail could have that VIL (it lies above the receiver's supply)
LEVEL_LOW_FIX_DRIVER = "a driver whose VOL is at most {v_ol}, where this check passes"
LEVEL_LOW_SINK_FIX = ("a larger pull-up (lines.{signal}.pullup: less current for {driver}'s "
                      "sink lowers its VOL), or a sink that holds the line at {v_ol} or "
                      "less, where this check passes")

# pinlib/engines/bench.py (a rise time measured on the board against the model)
NO_SUCH_BUS = "no bus of that id in the design"
BENCH_AGREES = "the measurement agrees with the model"
BENCH_ABOVE = ("the board holds more capacitance than the model: revisit, most likely "
               "first,")
BENCH_BELOW = ("the board holds less capacitance than the model (the model takes every "
               "contribution at its maximum): revisit, largest first,")
REVISIT_PINS = ("pins {value}: each part's c_in (the datasheet's maximum, or its typical "
                "value on a real board) and parts on the line the design does not list")
REVISIT_TRACES = "traces {value}: the trace lengths and the geometry (width, height, er)"
REVISIT_CABLES = "cables {value}: each cable class's capacitance per length and its length"
REVISIT_EXTRA = ("extra {value}: extra_capacitance (connectors, ESD parts, test points not "
                 "in the design)")
REVISIT_PULLUP = ("the pull-up {rp} on the line: the fitted resistor's value and any pull-ups "
                  "inside parts (Cb from a reading scales as 1/Rp)")
REVISIT_PROBE = ("the measurement: the probe's capacitance, its ground lead, and the levels "
                 "the rise was read between")
# a reading whose Cb no board's bus holds: a warning (pinlib/engines/bench.py)
BENCH_CB_TOO_HIGH = ("Cb {cb} from the reading is implausible for a board's bus: {excess} "
                     "above the model's {model}, where what a design leaves out (pins, "
                     "traces, connectors) adds well under {bound} ({basis}); recheck the "
                     "probe, the levels the rise was read between, the pull-up {rp} and the "
                     "time base")
BENCH_CB_TOO_LOW = ("Cb {cb} from the reading is implausible for a board's bus: under "
                    "{bound}, less than one part's pin adds ({basis}); recheck the probe's "
                    "capacitance (the reading's Cb is what is left once it is taken off), "
                    "the levels the rise was read between and the pull-up {rp}")
# a GPIO bus's line measured (pinlib/engines/bench.py)
BENCH_NO_SUCH_LINE = "no line of that name on the bus"
BENCH_LINE_NEEDED = "the bus has several lines: name the one measured"
BENCH_GPIO_SEGMENT = "a GPIO bus has no segments"
BENCH_PUSH_PULL_LINE = ("no open-drain pin drives this line: its rise is a driver's own edge, "
                        "not an RC charge through a pull-up, so it gives no bus capacitance")
BENCH_NO_PULLUP = ("the line has no pull-up: an open-drain line without one never rises, so "
                   "a rise time gives no bus capacitance")
BENCH_ALSO_PUSH_PULL = ("{who} also drive{s} {signal} push-pull: the reading is a rise "
                        "through the pull-up only with {them} idle (high impedance)")
# the command's measuring levels
LEVELS_FORM = "measuring levels are two numbers, low,high"
LEVELS_FORMS = ("expected percent of the rail (30,70), fractions (0.3,0.7) or volts "
                "with their unit (0.65V,1.5V)")
LEVELS_VOLTS_BOTH = ("measuring levels in volts are two voltages, each with its unit "
                     "(0.65V,1.5V) (got {got!r})")
LEVELS_VOLTS_ORDER = ("measuring levels in volts run from the lower to the higher, at or "
                      "above 0 V (got {got!r})")
LEVEL_NOT_BELOW_RAIL = "a measuring level at or above the rail is never reached"

# ---------------------------------------------------------------- studies
# pinlib/studies/compare/
NO_SNAPSHOT_PLACE = "the design was not loaded from a file, so it has no snapshot place"
NOT_A_RESULT = "not a result"
SNAPSHOT_NOT_JSON = "the snapshot is not valid JSON: {detail}"
NOT_A_SNAPSHOT = "not a pinlib result snapshot"
SNAPSHOT_DAMAGED = "the snapshot is damaged: a value of the wrong kind"
# printed by pinlib check and pinlib report after the error of a snapshot they ignore
SNAPSHOT_IGNORED = "the snapshot is ignored (no change list); {advice}"
# the advice beside a snapshot that cannot be used (pinlib/studies/snapshotfile.py)
SNAPSHOT_SAVE_ANEW = "delete it or save a new one with `pinlib check {design} --save`"
SNAPSHOT_IS_FOLDER = ("a folder stands where the snapshot file belongs (--save never writes "
                      "over a folder)")
SNAPSHOT_MOVE_AWAY = ("move or rename it, then `pinlib check {design} --save` writes the "
                      "snapshot there")
NEGATIVE_THRESHOLD = "a negative threshold"
# pinlib swap --write, under the change list, when the design file could not be written
SWAP_NOT_WRITTEN = ("{path} not changed: it could not be written (the error follows on "
                    "standard error)")
# pinlib swap --part OLD=NEW --write: a design's line when its file could not be written
SWAP_LINE_NOT_WRITTEN = "not written (the error is on standard error)"
# pinlib swap --part OLD=NEW: a design where OLD stands only as a class its parts extend
SWAP_ONLY_EXTENDED = ("{old} is a class other parts extend ({where}); --part replaces a part "
                      "as placed: `pinlib parts used-by {old}` lists the positions of the "
                      "parts that extend it")
EDIT_CHANGES_MORE = "editing the design file would change more than the parts"
EDIT_LOST_PART = "the edited design does not hold the new part"
# pinlib/studies/candidates.py
UNKNOWN_CATEGORY = "unknown category"
CABLE_NOT_RANKED = ("a cable is no candidate: it stands at no position (a bus or a line "
                    "lists it under cables)")
# pinlib/studies/whatif/
UNKNOWN_DISTRIBUTION = "unknown distribution"
NOT_A_PROPORTION = "not a proportion"
NOT_A_CONFIDENCE = "not a confidence level"
TOO_FEW_SAMPLES = "too few samples"
CHUNK_NOT_POSITIVE = "chunk must be positive"
TOO_MANY_SAMPLES = "too many boards for one run"
# pinlib/present/plotdata.py
DRAWN_FOR_PROTOCOLS = "{what} is drawn for {protocols} buses"
NO_EVALUATED_LINE = "no evaluated line of that name on the bus"
DOES_NOT_DRIVE_LINE = "the device does not drive this line"
UNKNOWN_OPEN_DRAIN_LINE = "unknown open-drain line"
NO_SUCH_SEGMENT = "no segment of that id on the bus"
BUDGET_DOES_NOT_ADD_UP = "the timing budget terms do not add up to the engine's margin"

# ---------------------------------------------------------------- pinlib/present/charts.py
ARRAY_DIMENSIONS = "array with {n} dimension{s}"
CANNOT_BE_DRAWN = "cannot be drawn"
RP_BOUNDS_SHAPE = "rp_min and rp_max must be floats or arrays as long as cb"
WINDOW_NOT_DRAWABLE = "no point of the window can be drawn on log axes"
EDGE_TIMES_NOT_LOADS = "edge_times do not match loads"
SERIES_NAMES = "series needs one distinct name per curve"
POINTS_FORM = "points must be (loads, times, labels)"
POINTS_LENGTHS = "points: loads, times and labels differ in length"
#: After a result's warning margin ("warn below 10% margin; ..."): the checks with no
#: warning band, which pass up to their limit (warn_margin=0 in the engines).
RATING_NO_WARN_BAND = ("a rating — a supply range, a clock limit, the highest DC voltage on "
                       "a pin — passes up to its limit")
OPERATING_FORM = "operating must be (load, time) or (load, time, label)"
CURVES_NOT_DRAWABLE = "no point of the curves can be drawn"
TRACES_FORM = "traces must be a non-empty mapping of label to voltages"
VIL_ABOVE_VIH = "VIL above VIH"
LABEL_IN_LEGEND = "a {what} is also a legend entry of the chart"
BUDGET_ROW_FORM = "a budget row must be (path, component, duration)"
NO_BUDGET_ROWS = "no budget rows"
UNKNOWN_PATH = "unknown path"
UNKNOWN_STATUS = "unknown status"
NO_FINITE_SAMPLE = "no finite sample"
UNKNOWN_LIMIT_KIND = "unknown limit kind"
TOO_FEW_BINS = "too few bins"

# ---------------------------------------------------------------- pinlib/present/widgets/
# partfit.py: a peripheral offered on a bus whose limits it
# would pass only past a value typical of its class or an estimate (the checks warn)
UNFIT_SOFT = ("If added, {part} would warn on this bus ({checks}, against values typical "
              "of its class or estimated, not its datasheet's): ")
# ...: one it would fail (a firm limit crossed), and, where it is past soft ones too,
# which of its checks would only warn
UNFIT_FIRM = "If added, {part} would fail this bus ({checks}): "
UNFIT_ALSO_WARN = ("; it would only warn on {checks} (against values typical of its class "
                   "or estimated, not its datasheet's): ")
NOT_A_LISTED_VALUE = "not a value of the {what}"
UNKNOWN_SETTING = "unknown setting"
OUTSIDE_CONTROL_RANGE = "outside the control's range"
PART_NOT_FOR_OPEN_DRAIN_BUS = "the part cannot sit on an open-drain bus here"
NO_PLACED_PART = "no placed part with this reference"
FILE_NAME_NEEDED = "a file name is needed"
DESIGN_PATH_NEEDED = "a design file path is needed"
DESIGN_PATH_IS_FOLDER = "this is a folder, not a design file"
SAVE_WOULD_OVERWRITE = "{file} exists; Save does not overwrite a file"
SAVE_OVERWRITE_HINT = ("tick 'overwrite {name}' and press Save again to replace it, or "
                       "choose another name")
SAVE_TARGET_IS_FOLDER = "{file} is a folder"
SAVE_WITH_REFUSED_FIELDS = "not saved while a field is refused: {fields}"
NOT_AN_INPUT_PIN = "not an input pin of the part"
NO_SPI_BUS = "the design has no SPI bus"
NO_SPI_BUS_OF_ID = "no SPI bus of that id"
NO_TEAM_PART = "no team part to record into"

# ---------------------------------------------------------------- pinlib/present/review/
# Sentences the design-review report prints in place of what it could not draw or
# compare (whole sentences, not the problem of an error)
CHART_NOT_DRAWN = "Chart not drawn: {error}"
CHART_NOT_DRAWN_WITH_TITLE = "Chart not drawn ({title}): {error}"
NO_SAMPLED_CHECK_VARIES = "No sampled check varies over the boards: nothing to draw."
NO_SNAPSHOT_TO_COMPARE = ("No snapshot to compare with. Save one with `pinlib check {design} "
                          "--save`; later reports list every check whose status changed, every "
                          "figure that moved and the part values behind the change.")

# ---------------------------------------------------------------- commands check, report,
# candidates
NOT_A_WHOLE_NUMBER = "not a whole number: {text!r}"
AT_LEAST_ONE = "must be at least 1 (got {n})"
SEED_NEGATIVE = "a seed is 0 or more"
SEED_WITHOUT_MONTE_CARLO = "a seed without a Monte Carlo run"
MONTE_CARLO_UNAVAILABLE = "the Monte Carlo engine is not available in this pinlib"
REPORT_TARGET_IS_FOLDER = "the report target is a folder"
REPORT_FOLDER_MISSING = "the report's folder does not exist"
REPORT_TARGET_IS_INPUT = "the report would replace the design it reports on, or its snapshot"

# ---------------------------------------------------------------- pinlib/core/extras.py, demo
NEEDS_EXTRA = "{feature}: the '{extra}' extra of pinlib is not installed ({module} is missing)"
INSTALL_EXTRA = "install it with: pip install 'pinlib[{extra}]'"
DEMO_FILES_MISSING = "the demo files are not part of this installation of pinlib"
DEMO_WOULD_OVERWRITE = "the folder already holds {n} of the demo's files ({names})"
DEMO_FORCE_HINT = "--force overwrites them, or name another folder"
DEMO_DESIGN_HINT = ("pinlib demo copies the demo design out of the package (then: pinlib "
                    "check pinlib-demo/workbooks/designs/demo-board.toml)")

# ---------------------------------------------------------------- command workbench
NO_WORKBOOKS_IN_FOLDER = "no workbooks (*.ipynb) in the folder or in its workbooks/ folder"
WORKBOOKS_DEMO_HINT = "pinlib demo {folder} copies them there"
NOT_A_PORT = "not a port number"
PORT_IN_USE = "the port is in use on 127.0.0.1"
OTHER_PORT_HINT = "choose another with --port N"
SERVER_STOPPED = "the web server stopped (exit status {code})"
SERVER_DID_NOT_ANSWER = "the web server did not answer within {seconds:g} s"
SERVER_OUTPUT_HINT = "its own messages are above"

# ---------------------------------------------------------------- IBIS files (library.ibis)
IBIS_NOT_A_NUMBER = "not a number in IBIS notation"
IBIS_NUMBER_TOO_LARGE = "a number too large to hold (it overflows to infinity)"
IBIS_FIXTURE_OUT_OF_RANGE = "{name} out of range"
IBIS_TIME_NOT_INCREASING = "a waveform row not later than the row before"
IBIS_NA_NOT_ALLOWED = "NA where a value is needed"
IBIS_WRONG_COLUMNS = "{found} where {expected} columns belong"
IBIS_MISSING_KEYWORD = "the file has no {keyword}"
IBIS_DATA_BEFORE_KEYWORD = "data before any keyword"
IBIS_OUTSIDE_SECTION = "{keyword} outside a {section}"
IBIS_EMPTY_TABLE = "a table without rows"
IBIS_BAD_COMMENT_CHAR = "not a comment character IBIS allows"
IBIS_UNKNOWN_MODEL = "the pin names a model the file does not hold"
IBIS_UNKNOWN_PIN = "no such pin in the component"
IBIS_UNKNOWN_COMPONENT = "no such component in the file"
IBIS_PIN_MAPPING = "not a pin mapping"
IBIS_CURRENT_OUTSIDE_TABLE = "the table does not reach this current"
IBIS_NO_SLOPE = "too few rows near the rail to take the table's slope"
IBIS_VALUE_WOULD_BE = "the part's {field} would be this; nothing was written"
IMPORT_NEEDS_ID = "no --id given: the part to write needs an id"
IBIS_NO_GUESS = "no signal name of [Component] {component} suggests a pin function"
IBIS_FIT_POOR = ("pin {pin}, {edge} ({corner}): the driver model misses the waveforms by "
                 "{residual} of the swing (RMS), more than {limit} (common practice, no "
                 "source); its edges are approximate")

#: The modules whose raise sites, warnings and report sentences take their texts from here.
MODULES = (
    "pinlib.core.tomlfile",
    "pinlib.core.records",
    "pinlib.core.quantity",
    "pinlib.library.loader",
    "pinlib.library.schema",
    "pinlib.library.values",
    "pinlib.library.fields",
    "pinlib.library.folders",
    "pinlib.library.plausible",
    "pinlib.library.pinsets",
    "pinlib.library.sources",
    "pinlib.library.record",
    "pinlib.library.ibis",
    "pinlib.library.ibisderive",
    "pinlib.library.ibisimport",
    "pinlib.cli.commands.partsimport",
    "pinlib.model.design",
    "pinlib.cli.commands.parts",
    "pinlib.cli.commands.partscheck",
    "pinlib.cli.commands.partsusedby",
    "pinlib.cli.commands.swap",
    "pinlib.standards.i2c",
    "pinlib.standards.jedec",
    "pinlib.standards.smbus",
    "pinlib.core.eseries",
    "pinlib.physics.rc",
    "pinlib.physics.pullup",
    "pinlib.physics.waveform",
    "pinlib.physics.lines",
    "pinlib.physics.driver",
    "pinlib.engines.limits",
    "pinlib.engines.opendrain",
    "pinlib.engines.pushline",
    "pinlib.engines.pushpull",
    "pinlib.engines.spi",
    "pinlib.engines.bench",
    "pinlib.cli.commands.measured",
    "pinlib.studies.compare.snapshots",
    "pinlib.studies.compare.figures",
    "pinlib.studies.compare.changes",
    "pinlib.studies.compare.substitution",
    "pinlib.studies.snapshotcheck",
    "pinlib.studies.candidates",
    "pinlib.studies.whatif.tolerances",
    "pinlib.studies.whatif.yields",
    "pinlib.studies.whatif.checknames",
    "pinlib.studies.whatif.tally",
    "pinlib.studies.whatif.mcresult",
    "pinlib.studies.whatif.sensitivity",
    "pinlib.studies.whatif.montecarlo",
    "pinlib.studies.whatif.cornersearch",
    "pinlib.studies.many",
    "pinlib.studies.designpaths",
    "pinlib.present.plotdata",
    "pinlib.present.charts",
    "pinlib.present.widgets.common",
    "pinlib.present.widgets.designdoc",
    "pinlib.present.widgets.busbuilder",
    "pinlib.present.widgets.partfit",
    "pinlib.present.widgets.lineexplorer",
    "pinlib.present.widgets.spibudget",
    "pinlib.present.widgets.recorder",
    "pinlib.present.widgets.swaps",
    "pinlib.present.widgets.crosstalk",
    "pinlib.present.review.draw",
    "pinlib.present.review.charts",
    "pinlib.present.review.montecarlo",
    "pinlib.present.review.text",
    "pinlib.present.review.parts",
    "pinlib.present.review.html",
    "pinlib.present.review.markdown",
    "pinlib.present.review.build",
    "pinlib.cli.commands.check",
    "pinlib.cli.commands.report",
    "pinlib.cli.commands.candidates",
    "pinlib.cli.commands.demo",
    "pinlib.cli.commands.workbench",
    "pinlib.cli.commands.new",
    "pinlib.cli.commands.schema",
    "pinlib.core.extras",
)


def all_messages() -> dict[str, str]:
    """Every message constant of this module, by name."""
    return {name: value for name, value in globals().items()
            if name.isupper() and isinstance(value, str)}


__all__ += sorted(all_messages())
