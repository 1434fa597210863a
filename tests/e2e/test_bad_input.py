"""Malformed and hostile input, one table row each, against every importer and command.

Every row states the command (and any files it reads), the exit status, the exact
first line of stderr (or, where the importer lists problems, every line), and is
proved harmless: a digest of every table, every row, in order, is the same before
and after. A second part checks hostile-but-valid text is stored exactly and that
extreme numbers and dates are exact or refused clearly.

Set KEEL_SHOW=1 to print what each row produced instead of stopping at the first
difference.
"""
import datetime
import hashlib
import os
import sqlite3
import sys

sys.path.insert(0, os.path.dirname(__file__))
from keel_cli import SOURCE, Ledger, check, equal, ledger_digest  # noqa: E402

SHOW = os.environ.get("KEEL_SHOW") == "1"
# keel's today is the local calendar day; so is Python's (both follow TZ).
TODAY = datetime.date.today().isoformat()
INPUT, USAGE, LEDGER = 1, 2, 3


led = Ledger()
D = led.dir.name
T = "Alder Taxable"
led.ok("account", "add", T)
led.ok("account", "add", "Birch Pension", "--basis", "specific")
led.ok("security", "add", "QRX", "--name", "Quarix Holdings", "--kind", "stock")
led.ok("security", "add", "VLM", "--name", "Valmora Index Fund", "--kind", "fund", "--lot-size",
       "0.001")
led.ok("record", "deposit", "--date", "2024-01-02", "--account", T, "--amount", "10000")
led.ok("record", "buy", "--date", "2024-01-03", "--account", T, "--symbol", "QRX", "--quantity", "10",
       "--price", "50", "--ref", "b-1")
led.ok("security", "add", "ZLF", "--name", "Zelfa Werke", "--kind", "stock", "--currency", "EUR")
fx_seed = os.path.join(D, "seed-fx.csv")
with open(fx_seed, "w") as f:
    f.write("date,base,quote,rate\n2024-01-02,EUR,USD,1.10\n")
led.ok("import", "fx", fx_seed)
mk = os.path.join(D, "seed-prices.csv")
with open(mk, "w") as f:
    f.write("date,symbol,close\n2024-01-03,QRX,50\n2024-02-01,QRX,55\n")
led.ok("import", "prices", mk)

digest, table_count = ledger_digest(led.path)
check(table_count >= 5, f"the ledger digest covers only {table_count} tables")


def path(name):
    return os.path.join(D, name)


# Each row: (name, args, exit status, expected stderr, files)
#  - expected stderr is a string (the exact first line) or a list (every line);
#  - files maps a file name in the ledger's folder to its bytes; "{d}" in args
#    and messages is that folder.
ROWS = []


def row(name, args, code, message, files=None):
    ROWS.append((name, args, code, message, files or {}))


def imp(what, content, code, message, mapping=None, name=None):
    fname = name or f"{what}-{len(ROWS)}.csv"
    files = {fname: content if isinstance(content, bytes) else content.encode()}
    args = ["import", what, "{d}/" + fname]
    if mapping is not None:
        files[f"map-{len(ROWS)}.toml"] = mapping.encode()
        args += ["--map", "{d}/" + f"map-{len(ROWS)}.toml"]
    return files, args, fname


def import_row(name, what, content, code, message, mapping=None, fname=None):
    files, args, fname = imp(what, content, code, message, mapping, fname)
    if isinstance(message, list):
        message = [m.replace("{f}", "{d}/" + fname) for m in message]
    else:
        message = message.replace("{f}", "{d}/" + fname)
    row(name, args, code, message, files)


def refused(*lines):
    """The importer's listing: located lines, then the summary."""
    n = len(lines)
    return [*lines, f"keel: error: {{f}}: {n} error{'s' if n != 1 else ''}; nothing was changed"]


# --- accounts -----------------------------------------------------------------------------
import_row("accounts: missing required column", "accounts", "name\nCedar\n", INPUT,
           refused("{f}:1: column 'currency': missing from the header"))
import_row("accounts: unknown basis", "accounts", "name,currency,basis\nCedar,USD,newest\n", INPUT,
           refused("{f}:2: unknown cost-basis method 'newest'; expected one of: "
                   "fifo, lifo, hifo, average, specific"))
import_row("accounts: name already in the ledger", "accounts", f"name,currency\n{T},EUR\n", INPUT,
           refused(f"{{f}}:2: column 'name': account '{T}' already exists with other settings"))
import_row("accounts: control character in a name", "accounts",
           "name,currency\n\"Cedar\x1b[31m\",USD\n", INPUT,
           refused("{f}:2: account name 'Cedar\\x1b[31m' contains a control character"))
import_row("accounts: invalid UTF-8 in a name", "accounts", b"name,currency\nCedar\xff\xfe,USD\n",
           INPUT, refused("{f}:2: account name 'Cedar\\xff\\xfe' is not valid UTF-8"))
import_row("accounts: newline inside a quoted name", "accounts", "name,currency\n\"Ce\ndar\",USD\n",
           INPUT, refused("{f}:2: account name 'Ce\\x0adar' contains a control character"))
import_row("accounts: bad allow_negative_cash", "accounts",
           "name,currency,allow_negative_cash\nCedar,USD,maybe\n", INPUT,
           refused("{f}:2: allow_negative_cash must be yes or no"))
import_row("accounts: bad currency", "accounts", "name,currency\nCedar,DOLLARS\n", INPUT,
           refused("{f}:2: currency 'DOLLARS' is not a three-letter code such as EUR"))
import_row("accounts: mapping for another kind", "accounts", "name,currency\nCedar,USD\n", INPUT,
           "keel: error: {d}/map-%d.toml: this mapping is for importing prices, not accounts"
           % len(ROWS), mapping='for = "prices"\n')

# --- transactions -------------------------------------------------------------------------
TX = "date,account,kind,symbol,quantity,price,amount,fee,ref,note\n"
import_row("transactions: a day that does not exist", "transactions",
           TX + f"2024-02-30,{T},deposit,,,,5,,,\n", INPUT,
           refused("{f}:2: column 'date': 2024-02-30 is not a day of the calendar"))
import_row("transactions: a row dated 2099-12-31", "transactions",
           TX + f"2099-12-31,{T},deposit,,,,5,,,\n", INPUT,
           refused(f"{{f}}:2: column 'date': 2099-12-31 is after today ({TODAY}); give "
                   "--allow-future-date to import it anyway"))
import_row("transactions: unknown account", "transactions", TX + "2024-03-01,Nobody,deposit,,,,5,,,\n",
           INPUT, refused("{f}:2: column 'account': unknown account 'Nobody'"))
import_row("transactions: oversell names the line", "transactions",
           TX + f"2024-03-01,{T},sell,QRX,11,60,,,,\n", INPUT,
           [f"{{f}}:2: sell on 2024-03-01 in '{T}': cannot take 11 units; only 10 held",
            "keel: error: {f}: 1 error; nothing was changed"])
import_row("transactions: wrong field count", "transactions", TX + f"2024-03-01,{T},deposit,,,,5\n",
           INPUT, refused("{f}:2: has 7 fields but the header has 10 (RFC 4180 section 2.4)"))
import_row("transactions: SQL in a ref is only text, and a duplicate ref is refused", "transactions",
           TX + f"2024-03-01,{T},deposit,,,,5,,\"x'); DROP TABLE txn;--\",\n"
                f"2024-03-02,{T},deposit,,,,6,,\"x'); DROP TABLE txn;--\",\n", INPUT,
           refused("{f}:3: column 'ref': reference 'x'); DROP TABLE txn;--' also appears on line 2"))
import_row("transactions: 31 digits after the point", "transactions",
           TX + f"2024-03-01,{T},deposit,,,,0.0000000000000000000000000000001,,,\n", INPUT,
           refused("{f}:2: column 'amount': '0.0000000000000000000000000000001' is not a decimal "
                   "number: more than 30 digits after the point"))
import_row("transactions: 61 significant digits", "transactions",
           TX + f"2024-03-01,{T},deposit,,,,{'9' * 61},,,\n", INPUT,
           refused(f"{{f}}:2: column 'amount': '{'9' * 61}' is not a decimal number: more than 60 "
                   "significant digits"))
import_row("transactions: negative amount", "transactions", TX + f"2024-03-01,{T},deposit,,,,-5,,,\n",
           INPUT, refused("{f}:2: column 'amount' = -5: deposit: must be positive, not -5 (the kind "
                          "gives the direction)"))
import_row("transactions: control character in a note", "transactions",
           TX + f"2024-03-01,{T},deposit,,,,5,,,\"bell\x07\"\n", INPUT,
           refused("{f}:2: note 'bell\\x07' contains a control character"))
import_row("transactions: a 1 MB note", "transactions",
           TX + f"2024-03-01,{T},deposit,,,,5,,,{'n' * (1 << 20)}\n", INPUT,
           refused("{f}:2: note is longer than 4000 bytes"))
import_row("transactions: unclosed quote", "transactions", TX + f"2024-03-01,{T},deposit,,,,5,,\"open\n",
           INPUT, refused("{f}:2: column 'ref': quoted field is not closed before the end of the file "
                          "(RFC 4180 section 2.7)"))
import_row("transactions: a record over 16 MiB", "transactions",
           TX + "\"" + "x" * (17 << 20) + "\"\n", INPUT,
           "keel: error: {f}:2: a record is longer than 16 MiB; is the file CSV?")
import_row("transactions: binary file", "transactions", bytes(range(256)) * 4, INPUT,
           refused("{f}:1: column '\\x00\\x01\\x02\\x03\\x04\\x05\\x06\\x07\\x08\\x09': unknown column; "
                   "expected date, account, kind, symbol, quantity, price, amount, fee, ref, note, "
                   "to_account, lots, acquired, currency, rate, to_currency (or list it under 'ignore' in a mapping)",
                   "{f}:1: column 'date': missing from the header",
                   "{f}:1: column 'account': missing from the header",
                   "{f}:1: column 'kind': missing from the header"))
import_row("transactions: mapping with a bad date format", "transactions",
           TX + f"01/03/2024,{T},deposit,,,,5,,,\n", INPUT,
           "keel: error: {d}/map-%d.toml:2: key 'dates.format': date format '%%d/%%m' must contain "
           "%%Y, %%m and %%d" % len(ROWS), mapping='[dates]\nformat = "%d/%m"\n')
import_row("transactions: date not matching the mapping's format", "transactions",
           TX + f"2024-03-01,{T},deposit,,,,5,,,\n", INPUT,
           refused("{f}:2: column 'date': '2024-03-01' does not match the date format '%d/%m/%Y'"),
           mapping='[dates]\nformat = "%d/%m/%Y"\n')
import_row("transactions: mapping that is not TOML", "transactions", TX, INPUT,
           "keel: error: {d}/map-%d.toml:1:9: not valid TOML: Error while parsing array: "
           "encountered end-of-file" % len(ROWS), mapping="for = [\n")

# --- broker files: action rules, currencies, OFX, reconcile --------------------------------
ACT = f'for = "transactions"\n[defaults]\naccount = "{T}"\n[actions]\ncolumn = "Action"\n'
BUY = '[[actions.rule]]\nwhen = "Buy"\nkind = "buy"\nquantity = "Qty"\nprice = "Price"\n'
MIXED = "Date,Action,Symbol,Qty,Price\n"
import_row("transactions: a mapping sends an action to no kind", "transactions", MIXED, INPUT,
           "keel: error: {d}/map-%d.toml:6: key 'actions.rule': action 'Buy' goes to no kind; add "
           "kind = \"...\"" % len(ROWS), mapping=ACT + '[[actions.rule]]\nwhen = "Buy"\n')
import_row("transactions: two mapping rules match the same rows", "transactions", MIXED, INPUT,
           "keel: error: {d}/map-%d.toml:11: key 'actions.rule': matches the same rows as the rule "
           "on line 6 (action 'buy')" % len(ROWS),
           mapping=ACT + BUY + '[[actions.rule]]\nwhen = "buy"\nkind = "sell"\n')
import_row("transactions: an action no rule books", "transactions",
           MIXED + "2024-03-01,Split,QRX,2,\n", INPUT,
           refused("{f}:2: column 'Action' = Split: no rule of the mapping books this action "
                   "(rules: 'Buy'); add a rule or list it under actions.skip"), mapping=ACT + BUY)
import_row("transactions: a figure of the wrong sign names the file's column", "transactions",
           MIXED + "2024-03-01,Buy,QRX,-2,50\n", INPUT,
           refused("{f}:2: column 'Qty' = -2: a buy row's quantity must be positive here; if the "
                   "file writes it negative, say sign = \"negative\" or \"either\" in the "
                   "mapping's rule on line 6"), mapping=ACT + BUY)
import_row("transactions: an unknown currency code", "transactions",
           "date,account,kind,amount,currency\n" f"2024-03-01,{T},deposit,5,XYZ\n", INPUT,
           refused("{f}:2: column 'currency' = XYZ: 'XYZ' is not an ISO 4217 currency code (such "
                   "as EUR, USD, JPY)"))
import_row("transactions: an unknown currency to exchange into", "transactions",
           "date,account,kind,amount,rate,to_currency\n" f"2024-03-01,{T},exchange,5,0.9,EURO\n",
           INPUT,
           refused("{f}:2: column 'to_currency' = EURO: 'EURO' is not an ISO 4217 currency code "
                   "(such as EUR, USD, JPY)"))
import_row("transactions: a rate of zero", "transactions",
           "date,account,kind,symbol,amount,currency,rate\n"
           f"2024-03-01,{T},dividend,QRX,5,EUR,0\n", INPUT,
           refused("{f}:2: column 'rate' = 0: a rate must be greater than zero"))
import_row("transactions: a negative rate", "transactions",
           "date,account,kind,symbol,amount,currency,rate\n"
           f"2024-03-01,{T},dividend,QRX,5,EUR,-1.1\n", INPUT,
           refused("{f}:2: column 'rate' = -1.1: a rate must be greater than zero"))
import_row("transactions: a rate on a row in the account's own currency", "transactions",
           "date,account,kind,symbol,amount,rate\n" f"2024-03-01,{T},dividend,QRX,5,1.1\n", INPUT,
           refused(f"{{f}}:2: column 'rate' = 1.1: dividend: does not apply: the row is in USD, the "
                   f"currency of account '{T}'"))
import_row("transactions: a row in a currency with no rate for its day", "transactions",
           "date,account,kind,amount,currency\n" f"2024-03-01,{T},deposit,5,CHF\n", INPUT,
           refused(f"{{f}}:2: deposit on 2024-03-01 in '{T}': no exchange rate for USD/CHF on or "
                   "before 2024-03-01 (nor for CHF/USD, nor through a third currency); import one "
                   "with 'keel import fx FILE.csv'"))
import_row("transactions: a changed line with a booked ref", "transactions",
           TX + f"2024-01-03,{T},buy,QRX,10,51,,,b-1,\n", INPUT,
           refused("{f}:2: column 'ref' = b-1: already booked as transaction 2 with other content: "
                   "price 50 -> 51; to book the change, import with --book-corrections (voids 2 "
                   "and books this row)"))
OFX_HEAD = "OFXHEADER:100\nDATA:OFXSGML\nVERSION:102\n\n<OFX>\n"
row("transactions: an OFX file with an aggregate left open",
    ["import", "transactions", "{d}/open.ofx", "--account", T], INPUT,
    "keel: error: {d}/open.ofx:9: element <INVSTMTMSGSRSV1>: closes an element while "
    "<INVSTMTRS> opened on line 7 is still open",
    {"open.ofx": (OFX_HEAD + "<INVSTMTMSGSRSV1>\n<INVSTMTRS>\n<DTASOF>20240131\n"
                  "</INVSTMTMSGSRSV1>\n</OFX>\n").encode()})
row("transactions: an OFX closing tag that closes nothing",
    ["import", "transactions", "{d}/close.ofx", "--account", T], INPUT,
    "keel: error: {d}/close.ofx:6: element <BUYSTOCK>: closes no open element",
    {"close.ofx": (OFX_HEAD + "</BUYSTOCK>\n</OFX>\n").encode()})
row("transactions: an OFX statement without --account",
    ["import", "transactions", os.path.join(SOURCE, "examples/import/broker-statement.ofx")],
    INPUT, "keel: error: --account: the statement is for 'brokerage.invalid 77-1234'; name the "
    "keel account it belongs to")
row("import: --book-corrections outside transactions",
    ["import", "prices", "{d}/seed-prices.csv", "--book-corrections"], INPUT,
    "keel: error: --book-corrections: only for importing transactions")
STMT = "account,symbol,quantity,cost_basis,currency,cash\n"
row("reconcile: an unknown account and security, with the nearest names",
    ["reconcile", "{d}/stmt.csv", "--date", "2024-01-31"], INPUT,
    ["{d}/stmt.csv:2: column 'account': unknown account 'Alder Taxabel'; did you mean "
     "'Alder Taxable'?",
     "{d}/stmt.csv:3: column 'symbol': unknown security 'QXR'; did you mean 'QRX'?",
     "keel: error: {d}/stmt.csv: 2 errors; nothing was recorded"],
    {"stmt.csv": (STMT + "Alder Taxabel,QRX,10,,,\nAlder Taxable,QXR,10,,,\n").encode()})
row("reconcile: a CSV statement without --date", ["reconcile", "{d}/stmt2.csv"], INPUT,
    "keel: error: --date: a CSV statement needs its day, written YYYY-MM-DD",
    {"stmt2.csv": (STMT + "Alder Taxable,QRX,10,,,\n").encode()})
row("reconcile: --date not a calendar day",
    ["reconcile", "{d}/stmt3.csv", "--date", "2024-02-30"], INPUT,
    "keel: error: --date: '2024-02-30' is not a calendar date",
    {"stmt3.csv": (STMT + "Alder Taxable,QRX,10,,,\n").encode()})
row("reconcile: a row both position and cash",
    ["reconcile", "{d}/stmt4.csv", "--date", "2024-01-31"], INPUT,
    ["{d}/stmt4.csv:2: a row is either a position (symbol and quantity) or cash (cash and "
     "currency)", "keel: error: {d}/stmt4.csv: 1 error; nothing was recorded"],
    {"stmt4.csv": (STMT + "Alder Taxable,QRX,10,,USD,5\n").encode()})
row("reopen: an account never reconciled",
    ["reopen", "--account", T, "--from", "2024-01-01", "--reason", "x"], INPUT,
    f"keel: error: --account: '{T}' has no reconciled period to reopen")
row("reopen: --from not a calendar day",
    ["reopen", "--account", T, "--from", "2024-13-01", "--reason", "x"], INPUT,
    "keel: error: --from: '2024-13-01' is not a calendar date")

# --- securities ---------------------------------------------------------------------------
SEC = "symbol,name,kind,currency,lot_size,sector\n"
import_row("securities: unknown kind", "securities", SEC + "ZRN,Zornet Ltd,warrant,USD,1,\n", INPUT,
           refused("{f}:2: column 'kind': unknown security kind 'warrant'; expected one of: stock, "
                   "fund, bond, index, currency"))
import_row("securities: zero lot size", "securities", SEC + "ZRN,Zornet Ltd,stock,USD,0,\n", INPUT,
           refused("{f}:2: column 'lot_size': must be greater than zero"))
import_row("securities: 1 MB name", "securities", SEC + f"ZRN,{'N' * (1 << 20)},stock,USD,1,\n", INPUT,
           refused("{f}:2: column 'name': name is longer than 200 bytes"))
import_row("securities: escape sequence in a symbol", "securities",
           SEC + "\"ZR\x1b]0;owned\x07\",Zornet Ltd,stock,USD,1,\n", INPUT,
           refused("{f}:2: column 'symbol': symbol 'ZR\\x1b]0;owned\\x07' contains a control character"))
import_row("securities: invalid UTF-8 in a sector", "securities",
           SEC.encode() + b"ZRN,Zornet Ltd,stock,USD,1,Tech\xc3\n", INPUT,
           refused("{f}:2: column 'sector': sector 'Tech\\xc3' is not valid UTF-8"))
import_row("securities: symbol repeated in the file", "securities",
           SEC + "ZRN,Zornet Ltd,stock,USD,1,\nZRN,Zornet Ltd,stock,USD,1,\n", INPUT,
           refused("{f}:3: ZRN appears on an earlier line of this file"))
import_row("securities: unknown column", "securities", "symbol,name,kind,currency,colour\n", INPUT,
           refused("{f}:1: column 'colour': unknown column; expected symbol, name, kind, currency, "
                   "lot_size, sector (or list it under 'ignore' in a mapping)"))
import_row("securities: mapping with an unknown key", "securities", SEC, INPUT,
           "keel: error: {d}/map-%d.toml:2: key 'file.quote': unknown key; expected one of: "
           "delimiter, skip_lines, skip_rows_where" % len(ROWS), mapping='[file]\nquote = "\'"\n')

# --- prices -------------------------------------------------------------------------------
import_row("prices: unknown symbol", "prices", "date,symbol,close\n2024-03-01,NOPE,5\n", INPUT,
           refused("{f}:2: column 'symbol': unknown security 'NOPE'; import or add it first"))
import_row("prices: negative close", "prices", "date,symbol,close\n2024-03-01,QRX,-5\n", INPUT,
           refused("{f}:2: column 'close': -5 must not be negative"))
import_row("prices: close differs from the ledger's", "prices", "date,symbol,close\n2024-02-01,QRX,56\n",
           INPUT, refused("{f}:2: column 'close': QRX on 2024-02-01: the ledger already has close 55; "
                          "use --replace to overwrite it"))
import_row("prices: year 0", "prices", "date,symbol,close\n0000-12-31,QRX,5\n", INPUT,
           refused("{f}:2: column 'date': 0000-12-31 is not a day of the calendar"))
import_row("prices: exponent too large", "prices", "date,symbol,close\n2024-03-01,QRX,1e1001\n", INPUT,
           refused("{f}:2: column 'close': '1e1001' is not a decimal number: exponent is too large"))
import_row("prices: decimal comma without a mapping", "prices", "date,symbol,close\n2024-03-01,QRX,5,5\n",
           INPUT, refused("{f}:2: has 4 fields but the header has 3 (RFC 4180 section 2.4)"))
import_row("prices: mapping decimal comma meets a point", "prices",
           "date;symbol;close\n2024-03-01;QRX;5.5\n", INPUT,
           refused("{f}:2: column 'close': '5.5' has '.' but the decimal mark is ','"),
           mapping='[file]\ndelimiter = ";"\n[numbers]\ndecimal_mark = ","\n')
import_row("prices: file name with a newline and an escape", "prices",
           "date,symbol,close\n2024-03-01,QRX,x\n", INPUT,
           ["{d}/bad\\x0aname\\x1b[2J.csv:2: column 'close': 'x' is not a decimal number: expected "
            "digits", "keel: error: {d}/bad\\x0aname\\x1b[2J.csv: 1 error; nothing was changed"],
           fname="bad\nname\x1b[2J.csv")
import_row("prices: NUL byte in a close", "prices", b"date,symbol,close\n2024-03-01,QRX,5\x00\n",
           INPUT, refused("{f}:2: column 'close': '5\\x00' is not a decimal number: unexpected "
                          "character '\\x00'"))
row("prices: file that does not exist", ["import", "prices", "{d}/missing.csv"], INPUT,
    "keel: error: {d}/missing.csv: cannot open: No such file or directory")
row("prices: a folder instead of a file", ["import", "prices", "{d}"], INPUT,
    "keel: error: {d}: is a folder, not a file")
row("prices: mapping file that does not exist",
    ["import", "prices", "{d}/seed-prices.csv", "--map", "{d}/none.toml"], INPUT,
    "keel: error: {d}/none.toml: cannot open mapping file")

# --- metrics, distributions, splits -------------------------------------------------------
import_row("metrics: known_on before the period end", "metrics",
           "date,symbol,metric,value,known_on\n2024-03-31,QRX,pe,12,2024-03-01\n", INPUT,
           refused("{f}:2: column 'known_on': 2024-03-01 is before the period date 2024-03-31; a "
                   "figure cannot be known before its period ends"))
import_row("metrics: metric name with a control character", "metrics",
           "date,symbol,metric,value\n2024-03-31,QRX,\"p\te\",12\n", INPUT,
           refused("{f}:2: column 'metric': metric name 'p\\x09e' contains a control character"))
import_row("distributions: pay date before ex date", "distributions",
           "ex_date,pay_date,symbol,per_share\n2024-03-10,2024-03-01,QRX,0.5\n", INPUT,
           refused("{f}:2: column 'pay_date': 2024-03-01 is before the ex-date 2024-03-10"))
import_row("distributions: zero per share", "distributions",
           "ex_date,symbol,per_share\n2024-03-10,QRX,0\n", INPUT,
           refused("{f}:2: column 'per_share': must be greater than zero"))
import_row("splits: dated 2099-12-31", "splits", "date,symbol,ratio\n2099-12-31,QRX,2\n", INPUT,
           refused(f"{{f}}:2: column 'date': 2099-12-31 is after today ({TODAY}); give "
                   "--allow-future-date to import it anyway"))
import_row("splits: negative ratio", "splits", "date,symbol,ratio\n2024-03-10,QRX,-2\n", INPUT,
           refused("{f}:2: column 'ratio': -2 must not be negative"))
import_row("splits: header only in another layout, bad skip_lines", "splits", "x\n", INPUT,
           "keel: error: {d}/map-%d.toml:2: key 'file.skip_lines': must be a whole number from 0 to "
           "1000" % len(ROWS), mapping="[file]\nskip_lines = -1\n")
row("import: unknown kind of data", ["import", "trades", "{d}/seed-prices.csv"], INPUT,
    "keel: error: cannot import or export 'trades'; expected one of: accounts, transactions, "
    "actions, securities, prices, metrics, distributions, splits, fx")

# --- exchange rates -------------------------------------------------------------------------
import_row("fx: an unknown currency code", "fx", "date,base,quote,rate\n2024-03-01,EUR,XYZ,1.1\n",
           INPUT, refused("{f}:2: column 'quote': 'XYZ' is not an ISO 4217 currency code (such as "
                          "EUR, USD, JPY)"))
import_row("fx: a rate of zero", "fx", "date,base,quote,rate\n2024-03-01,EUR,USD,0\n", INPUT,
           refused("{f}:2: column 'rate': must be greater than zero"))
import_row("fx: a negative rate", "fx", "date,base,quote,rate\n2024-03-01,EUR,USD,-1.1\n", INPUT,
           refused("{f}:2: column 'rate': -1.1 must not be negative"))
import_row("fx: a currency against itself", "fx", "date,base,quote,rate\n2024-03-01,EUR,EUR,1\n",
           INPUT, refused("{f}:2: column 'quote': the quote currency is the base currency EUR; a "
                          "rate of 1 is never stored"))
import_row("fx: a rate that differs from the ledger's", "fx",
           "date,base,quote,rate\n2024-01-02,EUR,USD,1.2\n", INPUT,
           refused("{f}:2: column 'rate': EUR/USD on 2024-01-02: the ledger already has rate 1.1; "
                   "use --replace to overwrite it"))
import_row("fx: the same pair and day twice", "fx",
           "date,base,quote,rate\n2024-03-01,EUR,USD,1.1\n2024-03-01,EUR,USD,1.1\n", INPUT,
           refused("{f}:3: EUR/USD on 2024-03-01 appears on an earlier line of this file"))
import_row("fx: a day that does not exist", "fx", "date,base,quote,rate\n2024-02-30,EUR,USD,1.1\n",
           INPUT, refused("{f}:2: column 'date': 2024-02-30 is not a day of the calendar"))

# --- foreign currencies in record ----------------------------------------------------------
row("record: an unknown currency code",
    ["record", "deposit", "--date", "2024-03-01", "--account", T, "--amount", "5", "--currency",
     "XYZ"], INPUT,
    "keel: error: --currency: 'XYZ' is not an ISO 4217 currency code (such as EUR, USD, JPY)")
row("record: a rate of zero",
    ["record", "dividend", "--date", "2024-03-01", "--account", T, "--symbol", "ZLF", "--amount",
     "5", "--rate", "0"], INPUT,
    "keel: error: dividend: --rate must be greater than zero, not 0")
row("record: an exchange the wrong way round",
    ["record", "exchange", "--date", "2024-03-01", "--account", T, "--amount", "100",
     "--to-currency", "EUR", "--rate", "1.10"], INPUT,
    "keel: error: exchange: --rate 1.1 reads as 1 USD = 1.1 EUR, the wrong way round: on "
    "2024-01-02 1 USD = 0.909090909091 EUR and 1 EUR = 1.1 USD; give the rate as EUR per USD")
row("record: a foreign buy with neither foreign cash nor a settlement rate",
    ["record", "buy", "--date", "2024-03-01", "--account", T, "--symbol", "ZLF", "--quantity", "10",
     "--price", "50"], INPUT,
    f"keel: error: the new buy on 2024-03-01 in '{T}': needs 500 EUR of cash in EUR, but '{T}' "
    "holds 0 EUR; cash in one currency does not pay for another: exchange it first, or give the "
    "broker's settlement rate")
row("record: mixing currencies in one cash balance",
    ["record", "withdrawal", "--date", "2024-03-01", "--account", T, "--amount", "5", "--currency",
     "EUR"], INPUT,
    f"keel: error: the new withdrawal on 2024-03-01 in '{T}': needs 5 EUR of cash in EUR, but '{T}' "
    "holds 0 EUR; cash in one currency does not pay for another: exchange it first, or give the "
    "broker's settlement rate")
row("record: a settlement rate on a row in the account's own currency",
    ["record", "dividend", "--date", "2024-03-01", "--account", T, "--symbol", "QRX", "--amount",
     "5", "--rate", "1.1"], INPUT,
    f"keel: error: dividend: --rate 1.1 does not apply: the row is in USD, the currency of account "
    f"'{T}'")
row("record: an exchange into the currency sold",
    ["record", "exchange", "--date", "2024-03-01", "--account", T, "--amount", "100",
     "--to-currency", "USD", "--rate", "1"], INPUT,
    "keel: error: exchange: --to-currency USD is the currency sold")

# --- record, void, account add, security add ----------------------------------------------
row("record: a day that does not exist",
    ["record", "deposit", "--date", "2024-02-30", "--account", T, "--amount", "5"], INPUT,
    "keel: error: --date: '2024-02-30' is not a calendar date")
row("record: a deposit dated 2099-12-31",
    ["record", "deposit", "--date", "2099-12-31", "--account", T, "--amount", "5"], INPUT,
    f"keel: error: deposit: --date 2099-12-31 is after today ({TODAY}); give --allow-future-date "
    "to post it anyway")
row("record: a split dated 2099-12-31",
    ["record", "split", "--date", "2099-12-31", "--symbol", "QRX", "--ratio", "2"], INPUT,
    f"keel: error: split: --date 2099-12-31 is after today ({TODAY}); give --allow-future-date to "
    "post it anyway")
row("record: year 10000",
    ["record", "deposit", "--date", "10000-01-01", "--account", T, "--amount", "5"], INPUT,
    "keel: error: --date: '10000-01-01' is not a date in the form YYYY-MM-DD")
row("record: amount with a unit", ["record", "deposit", "--account", T, "--amount", "5 USD"], INPUT,
    "keel: error: --amount: '5 USD' is not a decimal number: unexpected character ' '")
row("record: withdrawal beyond the cash",
    ["record", "withdrawal", "--date", "2024-03-01", "--account", T, "--amount", "9500.01"], INPUT,
    f"keel: error: cash in '{T}' would be -0.01 at the end of 2024-03-01 (after the new withdrawal "
    f"on 2024-03-01 in '{T}'); the account does not allow negative cash")
row("record: 1e-12 units at a price of 31 places",
    ["record", "buy", "--date", "2024-03-01", "--account", T, "--symbol", "QRX", "--quantity",
     "0.000000000001", "--price", "1." + "0" * 30 + "1"], INPUT,
    "keel: error: --price: '1." + "0" * 30 + "1' is not a decimal number: more than 30 digits after "
    "the point")
row("record: unknown account with an escape sequence",
    ["record", "deposit", "--date", "2024-03-01", "--account", "Al\x1b[2Jder", "--amount", "5"],
    INPUT, f"keel: error: unknown account 'Al\\x1b[2Jder'; known accounts: {T}, Birch Pension")
row("record: a 100 kB note", ["record", "deposit", "--date", "2024-03-01", "--account", T,
                             "--amount", "5", "--note", "n" * 100000], INPUT,
    "keel: error: note is longer than 4000 bytes")
row("record: sell with a lot that does not exist",
    ["record", "sell", "--date", "2024-03-01", "--account", T, "--symbol", "QRX", "--quantity", "1",
     "--price", "60", "--lots", "999:1"], INPUT,
    f"keel: error: the new sell on 2024-03-01 in '{T}': lot 999 is not open in this position")
row("record: malformed lots", ["record", "sell", "--date", "2024-03-01", "--account", T, "--symbol",
                               "QRX", "--quantity", "1", "--price", "60", "--lots", "1;2"], INPUT,
    "keel: error: lots '1;2' must look like LOT:QUANTITY[,LOT:QUANTITY...], e.g. 12:5,14:2.5")
row("record: duplicate ref", ["record", "deposit", "--date", "2024-03-01", "--account", T,
                              "--amount", "5", "--ref", "b-1"], INPUT,
    f"keel: error: reference 'b-1' is already booked in account '{T}'")
# Regression: an empty --ratio passed CLI11's required() and crashed (exit 139).
row("record: split ratio empty",
    ["record", "split", "--date", "2024-03-01", "--symbol", "QRX", "--ratio", ""], INPUT,
    "keel: error: split: --ratio needs a number, such as 2 for two-for-one")
# Regression: history's date errors did not name the option.
row("history: --from not a calendar date", ["history", "--from", "2025-02-30"], INPUT,
    "keel: error: --from: '2025-02-30' is not a calendar date")
row("history: --to not a date", ["history", "--to", "soon"], INPUT,
    "keel: error: --to: 'soon' is not a date in the form YYYY-MM-DD")
row("record: split ratio zero",
    ["record", "split", "--date", "2024-03-01", "--symbol", "QRX", "--ratio", "0"], INPUT,
    "keel: error: split: --ratio must be positive, not 0")
row("record: missing required option", ["record", "deposit", "--amount", "5"], USAGE,
    "--account is required")
row("void: a transaction that does not exist", ["void", "999", "--reason", "typo"], INPUT,
    "keel: error: there is no transaction 999")
row("void: id that is not a number", ["void", "abc", "--reason", "typo"], USAGE,
    "Could not convert: ID = abc")
row("void: reason with a control character", ["void", "1", "--reason", "oops\r\n"], INPUT,
    "keel: error: reason 'oops\\x0d\\x0a' contains a control character")
row("account add: duplicate name", ["account", "add", T], INPUT,
    f"keel: error: an account named '{T}' already exists")
row("account add: empty name", ["account", "add", ""], INPUT,
    "keel: error: account name must not be empty")
row("account add: invalid UTF-8 name", ["account", "add", "Cedar\udcff"], INPUT,
    "keel: error: account name 'Cedar\\xff' is not valid UTF-8")
row("account add: C1 control character (U+009B) in a name", ["account", "add", "Cedar\u009b2J"],
    INPUT, "keel: error: account name 'Cedar\\xc2\\x9b2J' contains a control character")
row("init: --currency not a three-letter code", ["init", "--currency", "EURO"], INPUT,
    "keel: error: currency 'EURO' is not a three-letter code such as EUR")
row("init: --currency other than the ledger's", ["init", "--currency", "EUR"], INPUT,
    "keel: error: --currency: the ledger's currency is USD; it is set once and never changed (keel "
    "does not convert amounts already booked)")
row("account add: unknown basis", ["account", "add", "Cedar", "--basis", "newest"], INPUT,
    "keel: error: unknown cost-basis method 'newest'; expected one of: fifo, lifo, hifo, average, "
    "specific")
row("account add: unknown tax status", ["account", "add", "Cedar", "--tax-status", "sheltered"],
    INPUT, "keel: error: --tax-status: unknown tax status 'sheltered'; expected one of: taxable, "
    "tax-deferred, tax-exempt")
row("account tax-status: unknown tax status",
    ["account", "tax-status", T, "retirement", "--from", "2024-06-01"], INPUT,
    "keel: error: STATUS: unknown tax status 'retirement'; expected one of: taxable, "
    "tax-deferred, tax-exempt")
row("account tax-status: --from not a calendar day",
    ["account", "tax-status", T, "tax-exempt", "--from", "2024-02-30"], INPUT,
    "keel: error: --from: '2024-02-30' is not a calendar date")
row("account tax-status: the status already in force",
    ["account", "tax-status", T, "taxable", "--from", "2024-06-01"], INPUT,
    f"keel: error: account '{T}' is already taxable on 2024-06-01; nothing to change")
row("account tax-status: unknown account",
    ["account", "tax-status", "Nobody", "tax-exempt", "--from", "2024-06-01"], INPUT,
    f"keel: error: unknown account 'Nobody'; known accounts: {T}, Birch Pension")
row("security add: country not two letters",
    ["security", "add", "ZRN", "--name", "Zornet", "--kind", "stock", "--country", "NLD"], INPUT,
    "keel: error: --country: country 'NLD' is not a two-letter ISO 3166-1 code such as NL")
row("propose: --repurchase-window below one day",
    ["propose", "--rule", "{d}/rule.toml", "--repurchase-window", "0"], INPUT,
    "keel: error: --repurchase-window: '0' days; give 1 or more (the window is off unless given)",
    {"rule.toml": b"[scope]\naccounts = [\"Alder Taxable\"]\n\n[select]\nz_max = -0.5\n"})
row("propose: --currency with no rate path from an account's currency",
    ["propose", "--rule", "{d}/rule.toml", "--currency", "JPY"], INPUT,
    "keel: error: --currency JPY: account 'Alder Taxable' keeps USD and the proposal is valued in "
    "JPY: no exchange rate for USD/JPY on or before 2024-02-01; import one with 'keel import fx "
    "FILE.csv'",
    {"rule.toml": b"[scope]\naccounts = [\"Alder Taxable\"]\n\n[select]\nz_max = -0.5\n"})
row("propose: --currency not an ISO 4217 code",
    ["propose", "--rule", "{d}/rule.toml", "--currency", "DOLLARS"], INPUT,
    "keel: error: --currency: 'DOLLARS' is not an ISO 4217 currency code (such as EUR, USD, JPY)",
    {"rule.toml": b"[scope]\naccounts = [\"Alder Taxable\"]\n\n[select]\nz_max = -0.5\n"})
RULE_HEAD = b"[scope]\naccounts = [\"Alder Taxable\"]\n"
row("rule: a track-record window shorter than its horizon",
    ["propose", "--rule", "{d}/track-1.toml"], INPUT,
    "keel: error: {d}/track-1.toml:4: key 'track_record.window_months': 6 months is shorter than "
    "track_record.horizon_months (12); each observation's return must end inside the window",
    {"track-1.toml": RULE_HEAD + b"[track_record]\nwindow_months = 6\n"})
row("rule: more track-record observations than the window allows",
    ["backtest", "--rule", "{d}/track-2.toml", "--from", "2024-01-01", "--to", "2024-12-31"],
    INPUT,
    "keel: error: {d}/track-2.toml:5: key 'track_record.min_observations': 30 is more than the "
    "window allows: 36 months less a horizon of 12 leave at most 24 monthly observations",
    {"track-2.toml": RULE_HEAD + b"[track_record]\nhorizon_months = 12\nmin_observations = 30\n"})
row("rule: a misspelt track-record key",
    ["signal", "--rule", "{d}/track-3.toml", "--from", "2024-01-01", "--to", "2024-12-31"], INPUT,
    "keel: error: {d}/track-3.toml:4: key 'track_record.max_corelation': unknown key; did you "
    "mean 'max_correlation'?",
    {"track-3.toml": RULE_HEAD + b"[track_record]\nmax_corelation = 0\n"})
row("rule: a track-record method keel does not know",
    ["propose", "--rule", "{d}/track-4.toml"], INPUT,
    "keel: error: {d}/track-4.toml:4: key 'track_record.returns': 'excess' is not one of "
    "\"relative\", \"absolute\", \"zscore\"",
    {"track-4.toml": RULE_HEAD + b"[track_record]\nreturns = \"excess\"\n"})
row("rule: a metric listed twice",
    ["propose", "--rule", "{d}/metrics-1.toml"], INPUT,
    "keel: error: {d}/metrics-1.toml:4: key 'screen.metrics': metric 'pe' is listed twice",
    {"metrics-1.toml": RULE_HEAD + b'[screen]\nmetrics = [{ name = "pe" }, { name = "pe" }]\n'})
row("rule: a metric weight at or below zero",
    ["backtest", "--rule", "{d}/metrics-2.toml", "--from", "2024-01-01", "--to", "2024-12-31"],
    INPUT,
    "keel: error: {d}/metrics-2.toml:4: key 'screen.metrics.weight': -1 is out of range; must be "
    "above 0 and at most 1000",
    {"metrics-2.toml": RULE_HEAD + b'[screen]\nmetrics = [{ name = "pe", weight = -1 }]\n'})
row("rule: scores within a field securities do not have",
    ["signal", "--rule", "{d}/within-1.toml", "--from", "2024-01-01", "--to", "2024-12-31"], INPUT,
    "keel: error: {d}/within-1.toml:4: key 'screen.within': securities have no field 'industry'; "
    "z-scores can run within \"sector\" or \"country\"",
    {"within-1.toml": RULE_HEAD + b'[screen]\nwithin = "industry"\n'})
row("rule: a misspelt grouping field",
    ["propose", "--rule", "{d}/within-2.toml"], INPUT,
    "keel: error: {d}/within-2.toml:4: key 'screen.within': securities have no field 'sectors'; "
    "did you mean 'sector'?",
    {"within-2.toml": RULE_HEAD + b'[screen]\nwithin = "sectors"\n'})
SWEEP_RULE = {"rule.toml": b'[scope]\naccounts = ["Alder Taxable"]\n[select]\nby = "count"\n'
                           b'count = 10\n'}
SWEEP = ["sweep", "--rule", "{d}/rule.toml", "--from", "2024-01-01", "--to", "2024-12-31"]
row("sweep: --vary key misspelt", SWEEP + ["--vary", "select.cout=5,10"], INPUT,
    "keel: error: --vary: 'select.cout' is not a rule key; did you mean 'select.count'?",
    SWEEP_RULE)
row("sweep: --vary value out of the key's range", SWEEP + ["--vary", "select.count=0,5"], INPUT,
    "keel: error: --vary select.count=0: key 'select.count': 0 is out of range; must be from 1 "
    "to 1000000", SWEEP_RULE)
row("sweep: --vary value of the wrong type", SWEEP + ["--vary", "screen.max_age_days=90,soon"],
    INPUT, "keel: error: --vary screen.max_age_days=soon: key 'screen.max_age_days': must be a "
    "whole number from 1 to 3660", SWEEP_RULE)
row("sweep: --vary without values", SWEEP + ["--vary", "select.count"], INPUT,
    "keel: error: --vary: 'select.count' is not KEY=VALUE,VALUE,... (e.g. select.count=5,10,20)",
    SWEEP_RULE)
row("sweep: --vary with an empty value", SWEEP + ["--vary", "select.count=5,,10"], INPUT,
    "keel: error: --vary: 'select.count=5,,10' has an empty value", SWEEP_RULE)
row("sweep: --vary of a key that changes the data read", SWEEP + ["--vary", "scope.sector=A,B"],
    INPUT, "keel: error: --vary scope.sector: a sweep reads the market data once, for the rule's "
    "own universe and metric; sweep each scope in a run of its own", SWEEP_RULE)
row("sweep: --vary of a sleeve key", SWEEP + ["--vary", "sleeve.weight_pct=5,10"], INPUT,
    "keel: error: --vary: 'sleeve.weight_pct' cannot be set here: a rule may have several sleeves",
    SWEEP_RULE)
row("sweep: --vary key given twice",
    SWEEP + ["--vary", "select.count=5,10", "--vary", "select.count=20"], INPUT,
    "keel: error: --vary: 'select.count' is given twice; list all its values once", SWEEP_RULE)
row("sweep: --vary value listed twice", SWEEP + ["--vary", "select.count=5,10,5"], INPUT,
    "keel: error: --vary select.count: '5' is listed twice", SWEEP_RULE)
row("sweep: more variants than the maximum",
    SWEEP + ["--vary", "select.count=" + ",".join(str(i) for i in range(1, 16)),
             "--vary", "screen.max_age_days=" + ",".join(str(i) for i in range(1, 15))], INPUT,
    "keel: error: --vary: 210 variants is more than 200; the more variants are tried, the more "
    "the best one owes to luck. Give --max-variants 210 to run them all", SWEEP_RULE)
row("sweep: --walk-forward not IN:OUT",
    SWEEP + ["--vary", "select.count=5,10", "--walk-forward", "12"], INPUT,
    "keel: error: --walk-forward: '12' is not IN_MONTHS:OUT_MONTHS (e.g. 24:6)", SWEEP_RULE)
row("sweep: --walk-forward window too short to score",
    SWEEP + ["--vary", "select.count=5,10", "--walk-forward", "1:3"], INPUT,
    "keel: error: --walk-forward: an in-sample window of 1 month cannot be scored; the Sharpe "
    "ratio of monthly returns needs at least 2 months", SWEEP_RULE)
row("sweep: --walk-forward with no months out of sample",
    SWEEP + ["--vary", "select.count=5,10", "--walk-forward", "12:3"], INPUT,
    "keel: error: --walk-forward: the period 2024-01-01 to 2024-12-31 has 12 months; an "
    "in-sample window of 12 months leaves none out of sample", SWEEP_RULE)
row("sweep: --walk-forward out-of-sample window of zero",
    SWEEP + ["--vary", "select.count=5,10", "--walk-forward", "6:0"], INPUT,
    "keel: error: --walk-forward: the out-of-sample window must be at least 1 month, not 0",
    SWEEP_RULE)
row("sweep: --start-value of zero",
    SWEEP + ["--vary", "select.count=5", "--start-value", "0"], INPUT,
    "keel: error: --start-value: 0 is not above zero", SWEEP_RULE)
row("sweep: --from after --to", ["sweep", "--rule", "{d}/rule.toml", "--from", "2024-12-31",
    "--to", "2024-01-01", "--vary", "select.count=5"], INPUT,
    "keel: error: --from: 2024-12-31 is after --to 2024-01-01", SWEEP_RULE)
row("sweep: an empty --start-value (it was read from an unset value and crashed)",
    SWEEP + ["--vary", "select.count=5", "--start-value", ""], INPUT,
    "keel: error: --start-value: '' is not a decimal number: expected digits", SWEEP_RULE)
row("sweep: --html in a folder that does not exist",
    SWEEP + ["--vary", "select.count=5", "--html", "{d}/missing/sweep.html"], INPUT,
    "keel: error: --html {d}/missing/sweep.html: the folder '{d}/missing' does not exist",
    SWEEP_RULE)
BACKTEST = ["backtest", "--rule", "{d}/rule.toml", "--from", "2024-01-01", "--to", "2024-12-31"]
row("backtest: --start-value that is not a number", BACKTEST + ["--start-value", "lots"], INPUT,
    "keel: error: --start-value: 'lots' is not a decimal number: expected digits", SWEEP_RULE)
row("backtest: --html in a folder that does not exist",
    BACKTEST + ["--html", "{d}/missing/backtest.html"], INPUT,
    "keel: error: --html {d}/missing/backtest.html: the folder '{d}/missing' does not exist",
    SWEEP_RULE)
row("backtest: --html - with --json", BACKTEST + ["--html", "-", "--json"], INPUT,
    "keel: error: --html -: standard output already carries the JSON", SWEEP_RULE)
row("backtest: --curve - and --html -", BACKTEST + ["--curve", "-", "--html", "-"], INPUT,
    "keel: error: --html -: standard output already carries --curve -", SWEEP_RULE)
row("signal: --html in a folder that does not exist",
    ["signal", "--rule", "{d}/rule.toml", "--from", "2024-01-01", "--to", "2024-12-31", "--html",
     "{d}/missing/signal.html"], INPUT,
    "keel: error: --html {d}/missing/signal.html: the folder '{d}/missing' does not exist",
    SWEEP_RULE)
COMPARE_RULES = {"a.toml": b"[scope]\naccounts = [\"Alder Taxable\"]\n\n[select]\nz_max = -0.5\n",
                 "b.toml": b"[scope]\naccounts = [\"Alder Taxable\"]\n\n[select]\nz_max = -1\n"}
row("compare: one rule file",
    ["compare", "{d}/a.toml", "--from", "2024-01-01", "--to", "2024-12-31"], INPUT,
    "keel: error: RULES: a comparison needs two rule files or more (one rule alone: keel "
    "backtest)", COMPARE_RULES)
row("compare: the same rule file twice",
    ["compare", "{d}/a.toml", "{d}/b.toml", "{d}/a.toml", "--from", "2024-01-01", "--to",
     "2024-12-31", "--hold-months", "12"], INPUT, "keel: error: RULES: '{d}/a.toml' is given twice", COMPARE_RULES)
row("compare: the same rule file under another name",
    ["compare", "{d}/a.toml", "{d}/./a.toml", "--from", "2024-01-01", "--to", "2024-12-31",
     "--hold-months", "12"], INPUT, "keel: error: RULES: '{d}/./a.toml' is the same file as '{d}/a.toml'", COMPARE_RULES)
row("compare: a holding period longer than the data",
    ["compare", "{d}/a.toml", "{d}/b.toml", "--from", "2024-01-01", "--to", "2024-12-31",
     "--hold-months", "24"], INPUT,
    "keel: error: --hold-months: 24 months is longer than the 12 complete months from "
    "2024-01-01 to 2024-12-31", COMPARE_RULES)
row("compare: --html in a folder that does not exist",
    ["compare", "{d}/a.toml", "{d}/b.toml", "--from", "2024-01-01", "--to", "2024-12-31",
     "--hold-months", "12", "--html", "{d}/missing/compare.html"], INPUT,
    "keel: error: --html {d}/missing/compare.html: the folder '{d}/missing' does not exist",
    COMPARE_RULES)
row("compare: a holding period of no months",
    ["compare", "{d}/a.toml", "{d}/b.toml", "--from", "2024-01-01", "--to", "2024-12-31",
     "--hold-months", "0"], INPUT,
    "keel: error: --hold-months: 0 is not a number of months from 1 to 600", COMPARE_RULES)
PLAN_FIXED = (b'[pools.home]\naccounts = ["Alder Taxable", "Birch Pension"]\n'
              b'[[part]]\nname = "core"\npool = "home"\nshare_pct = 100\n'
              b'fixed = { QRX = 100 }\n')
row("propose --plan: --currency without an exchange rate on the day",
    ["propose", "--plan", "{d}/plan.toml", "--currency", "JPY", "--as-of", "2024-02-01"], INPUT,
    "keel: error: --currency JPY: account 'Alder Taxable' keeps USD and the proposal is valued in "
    "JPY: no exchange rate for USD/JPY on or before 2024-02-01; import one with 'keel import fx "
    "FILE.csv'",
    {"plan.toml": PLAN_FIXED})
row("propose: neither --rule nor --plan", ["propose"], INPUT,
    "keel: error: propose: give a rule (--rule FILE) or a plan (--plan FILE)")
row("propose: --rule and --plan together",
    ["propose", "--rule", "{d}/rule.toml", "--plan", "{d}/plan.toml"], USAGE,
    "--rule excludes --plan")
RULE_TWO = {"rule.toml": b'[scope]\naccounts = ["Alder Taxable", "Birch Pension"]\n'}
row("propose --rule: --deposit without an account in a rule of two",
    ["propose", "--rule", "{d}/rule.toml", "--deposit", "100"], INPUT,
    "keel: error: --deposit: the rule has 2 accounts; name the one the cash goes to or comes from "
    "(ACCOUNT=AMOUNT; accounts: Alder Taxable, Birch Pension)", RULE_TWO)
row("propose --rule: --withdraw from an account outside the rule",
    ["propose", "--rule", "{d}/rule.toml", "--withdraw", "Nobody=10"], INPUT,
    "keel: error: --withdraw: 'Nobody' is not an account of the rule (accounts: Alder Taxable, "
    "Birch Pension)", RULE_TWO)
row("propose --rule: --withdraw with sub-cent amount",
    ["propose", "--rule", "{d}/rule.toml", "--withdraw", "Alder Taxable=0.001"], INPUT,
    "keel: error: --withdraw: '0.001' is not an amount above zero with at most two decimals "
    "(ACCOUNT=AMOUNT, e.g. Savings=1500.00)", RULE_TWO)
row("propose --plan: --deposit not an amount",
    ["propose", "--plan", "{d}/plan.toml", "--deposit", "Alder Taxable=ten"], INPUT,
    "keel: error: --deposit: 'ten' is not an amount above zero with at most two decimals "
    "(ACCOUNT=AMOUNT, e.g. Savings=1500.00)", {"plan.toml": PLAN_FIXED})
row("propose --plan: --deposit with sub-cent amount",
    ["propose", "--plan", "{d}/plan.toml", "--deposit", "Alder Taxable=10.005"], INPUT,
    "keel: error: --deposit: '10.005' is not an amount above zero with at most two decimals "
    "(ACCOUNT=AMOUNT, e.g. Savings=1500.00)", {"plan.toml": PLAN_FIXED})
row("propose --plan: --withdraw to an account outside the plan",
    ["propose", "--plan", "{d}/plan.toml", "--withdraw", "Nobody=10"], INPUT,
    "keel: error: --withdraw: 'Nobody' is not an account of the plan (accounts: Alder Taxable, "
    "Birch Pension)", {"plan.toml": PLAN_FIXED})
row("propose --plan: --deposit without an account in a plan of two",
    ["propose", "--plan", "{d}/plan.toml", "--deposit", "10"], INPUT,
    "keel: error: --deposit: the plan has 2 accounts; name the one the cash goes to or comes from "
    "(ACCOUNT=AMOUNT; accounts: Alder Taxable, Birch Pension)", {"plan.toml": PLAN_FIXED})
row("propose --plan: --withdraw more than the cash",
    ["propose", "--plan", "{d}/plan.toml", "--withdraw", "Alder Taxable=1000000"], INPUT,
    "keel: error: --withdraw: account 'Alder Taxable' holds 9500 in cash and 550 in holdings to "
    "sell on 2024-02-01; it cannot give 1000000", {"plan.toml": PLAN_FIXED})
row("propose --plan: one account claimed by a pool and a part",
    ["propose", "--plan", "{d}/plan.toml"], INPUT,
    "keel: error: {d}/plan.toml:10:12: key 'part.accounts': account 'Alder Taxable' is already "
    "managed by pool 'home'; an account belongs to one pool or part only",
    {"plan.toml": PLAN_FIXED + b'[[part]]\nname = "more"\naccounts = ["Alder Taxable"]\n'
     b'fixed = { QRX = 100 }\n'})
row("propose --plan: a gain cap below zero", ["propose", "--plan", "{d}/plan.toml"], INPUT,
    "keel: error: {d}/plan.toml:2:12: key 'tax.gain_cap': -500 is below zero; a cap of 0 allows "
    "no net gain at all", {"plan.toml": b"[tax]\ngain_cap = -500\n" + PLAN_FIXED})
row("propose --plan: a gain cap with fractions of a cent",
    ["propose", "--plan", "{d}/plan.toml"], INPUT,
    "keel: error: {d}/plan.toml:2:12: key 'tax.gain_cap': 10.125 has more than two decimals",
    {"plan.toml": b"[tax]\ngain_cap = 10.125\n" + PLAN_FIXED})
row("propose --plan: an unknown selling order", ["propose", "--plan", "{d}/plan.toml"], INPUT,
    "keel: error: {d}/plan.toml:2:13: key 'tax.sell_from': must be \"any\" or "
    "\"tax-deferred-first\"", {"plan.toml": b'[tax]\nsell_from = "deferred"\n' + PLAN_FIXED})
row("propose --plan: an unknown tax key", ["propose", "--plan", "{d}/plan.toml"], INPUT,
    "keel: error: {d}/plan.toml:2:14: key 'tax.gain_limit': unknown key; expected one of: "
    "sell_from, gain_cap",
    {"plan.toml": b"[tax]\ngain_limit = 5\n" + PLAN_FIXED})
TAX_RULE = b'[scope]\naccounts = ["Alder Taxable", "Birch Pension"]\n'
row("propose --rule: a gain cap below zero", ["propose", "--rule", "{d}/rule.toml"], INPUT,
    "keel: error: {d}/rule.toml:4: key 'tax.gain_cap': -500 is below zero; a cap of 0 allows "
    "no net gain at all", {"rule.toml": TAX_RULE + b"[tax]\ngain_cap = -500\n"})
row("propose --rule: a gain cap with fractions of a cent", ["propose", "--rule", "{d}/rule.toml"],
    INPUT, "keel: error: {d}/rule.toml:4: key 'tax.gain_cap': 10.125 has more than two decimals",
    {"rule.toml": TAX_RULE + b"[tax]\ngain_cap = 10.125\n"})
row("propose --rule: an unknown selling order", ["propose", "--rule", "{d}/rule.toml"], INPUT,
    "keel: error: {d}/rule.toml:4: key 'tax.sell_from': must be \"any\" or "
    "\"tax-deferred-first\"", {"rule.toml": TAX_RULE + b'[tax]\nsell_from = "deferred"\n'})
row("propose --rule: an unknown tax key", ["propose", "--rule", "{d}/rule.toml"], INPUT,
    "keel: error: {d}/rule.toml:4: key 'tax.gain_limit': unknown key; expected one of: "
    "sell_from, gain_cap", {"rule.toml": TAX_RULE + b"[tax]\ngain_limit = 5\n"})
row("propose --rule: an unknown placement of a sleeve", ["propose", "--rule", "{d}/rule.toml"],
    INPUT, "keel: error: {d}/rule.toml:6: key 'sleeve.place': must be \"any\" or "
    "\"tax-deferred-first\"",
    {"rule.toml": TAX_RULE + b'[[sleeve]]\nsymbol = "QRX"\nweight_pct = 10\nplace = "first"\n'})
row("propose --plan: --deposit in the spelling AMOUNT:ACCOUNT",
    ["propose", "--plan", "{d}/plan.toml", "--deposit", "10:Alder Taxable"], INPUT,
    "keel: error: --deposit: '10:Alder Taxable' is not ACCOUNT=AMOUNT; write 'Alder Taxable=10'",
    {"plan.toml": PLAN_FIXED})
row("propose --plan: --deposit into an account outside the plan, a near miss",
    ["propose", "--plan", "{d}/plan.toml", "--deposit", "Alder Taxabel=10"], INPUT,
    "keel: error: --deposit: 'Alder Taxabel' is not an account of the plan (did you mean "
    "'Alder Taxable'?)", {"plan.toml": PLAN_FIXED})
row("propose --plan: missing plan file", ["propose", "--plan", "{d}/none.toml"], INPUT,
    "keel: error: {d}/none.toml: cannot open plan file")
row("propose --plan: shares of a pool not summing to 100",
    ["propose", "--plan", "{d}/plan.toml"], INPUT,
    "keel: error: {d}/plan.toml:6:13: key 'part.share_pct': the shares of pool 'home' sum to "
    "60%, not 100% (core 60%)", {"plan.toml": PLAN_FIXED.replace(b"= 100\n", b"= 60\n", 1)})
row("propose --plan: unknown key", ["propose", "--plan", "{d}/plan.toml"], INPUT,
    "keel: error: {d}/plan.toml:1:1: key 'pool': unknown key; did you mean 'pools'?",
    {"plan.toml": b'[pool.home]\naccounts = ["Alder Taxable"]\n'})
row("propose --plan: unknown account in a pool", ["propose", "--plan", "{d}/plan.toml"], INPUT,
    "keel: error: {d}/plan.toml:2:12: key 'pools.home.accounts': no account named 'Nobody' in the "
    "ledger (accounts: Alder Taxable, Birch Pension)",
    {"plan.toml": PLAN_FIXED.replace(b'"Birch Pension"', b'"Nobody"')})
row("propose --plan: unknown symbol in a fixed sleeve", ["propose", "--plan", "{d}/plan.toml"],
    INPUT, "keel: error: {d}/plan.toml:7:9: key 'part.fixed.ZZZ': no security 'ZZZ' in the "
    "ledger", {"plan.toml": PLAN_FIXED.replace(b"QRX", b"ZZZ")})
row("propose --plan: missing rule file", ["propose", "--plan", "{d}/plan.toml"], INPUT,
    "keel: error: {d}/nothing.toml: cannot open rule file",
    {"plan.toml": b'[[part]]\nrule = "nothing.toml"\n'})
row("gains: --repurchase-window below one day", ["gains", "--repurchase-window", "-3"], INPUT,
    "keel: error: --repurchase-window: '-3' days; give 1 or more (the window is off unless given)")
row("security add: duplicate symbol",
    ["security", "add", "QRX", "--name", "Again", "--kind", "stock"], INPUT,
    "keel: error: a security with symbol 'QRX' already exists")
row("security add: lot size not a number",
    ["security", "add", "ZRN", "--name", "Zornet", "--kind", "stock", "--lot-size", "one"], INPUT,
    "keel: error: --lot-size: 'one' is not a decimal number: expected digits")
INVISIBLE = ", an invisible character; names may not contain invisible or direction-changing " \
    "characters"
row("security add: zero-width space after a symbol", ["security", "add", "QRX\u200b", "--name",
    "Quarix look-alike", "--kind", "stock"], INPUT,
    "keel: error: symbol 'QRX<U+200B>' contains U+200B ZERO WIDTH SPACE" + INVISIBLE)
row("security add: right-to-left override in a symbol", ["security", "add", "QRX\u202e", "--name",
    "Quarix look-alike", "--kind", "stock"], INPUT,
    "keel: error: symbol 'QRX<U+202E>' contains U+202E RIGHT-TO-LEFT OVERRIDE" + INVISIBLE)
row("security add: space at the end of a symbol", ["security", "add", "QRX ", "--name",
    "Quarix look-alike", "--kind", "stock"], INPUT,
    "keel: error: symbol 'QRX ' ends with white space (U+0020 SPACE); names may not start or end "
    "with it")
row("account add: left-to-right isolate in a name", ["account", "add", "Cedar\u2066"], INPUT,
    "keel: error: account name 'Cedar<U+2066>' contains U+2066 LEFT-TO-RIGHT ISOLATE" + INVISIBLE)
import_row("transactions: word joiner in a ref", "transactions",
           TX + f"2024-03-01,{T},deposit,,,,5,,r\u20601,\n", INPUT,
           refused("{f}:2: ref 'r<U+2060>1' contains U+2060 WORD JOINER" + INVISIBLE))
row("security add: symbol with a newline",
    ["security", "add", "ZR\nN", "--name", "Zornet", "--kind", "stock"], INPUT,
    "keel: error: symbol 'ZR\\x0aN' contains a control character")

# --- reports ------------------------------------------------------------------------------
row("holdings: --as-of not a date", ["holdings", "--as-of", "yesterday"], INPUT,
    "keel: error: --as-of: 'yesterday' is not a date in the form YYYY-MM-DD")
row("holdings: --as-of year 0", ["holdings", "--as-of", "0000-01-01"], INPUT,
    "keel: error: --as-of: '0000-01-01' is not a calendar date")
row("holdings: unknown account", ["holdings", "--account", "Nobody"], INPUT,
    f"keel: error: unknown account 'Nobody'; known accounts: {T}, Birch Pension")
row("gains: --year not a number", ["gains", "--year", "twenty"], USAGE,
    "Could not convert: --year = twenty")
row("gains: --year out of range", ["gains", "--year", "10000"], INPUT,
    "keel: error: --year: '10000' is not a calendar year (1 to 9999)")
row("gains: negative --year", ["gains", "--year", "-5"], INPUT,
    "keel: error: --year: '-5' is not a calendar year (1 to 9999)")
row("statement: year before the trailing five years fit", ["statement", "--year", "4"], INPUT,
    "keel: error: --year: '4' is not a year a statement covers (6 to 9999; it looks back 5 years)")
row("statement: year 10000", ["statement", "--year", "10000"], INPUT,
    "keel: error: --year: '10000' is not a year a statement covers (6 to 9999; it looks back 5 "
    "years)")
row("returns: --from after --to", ["returns", "--from", "2024-03-01", "--to", "2024-02-01"], INPUT,
    "keel: error: --from 2024-03-01 is after --to 2024-02-01")
row("returns: --year and --period together", ["returns", "--year", "2024", "--period", "1y"], INPUT,
    "keel: error: --year and --period cannot be combined; give a range (--from/--to), --year or "
    "--period")
row("returns: unknown period word", ["returns", "--period", "2w"], INPUT,
    "keel: error: --period: '2w' is not a period; choose mtd, qtd, ytd, 1y, 3y, 5y, 10y or inception")
row("returns: ten years back from year 5", ["returns", "--period", "10y", "--as-of", "0005-06-30"],
    INPUT, "keel: error: --period 10y: ends on 0005-06-30, before the first transaction day "
    "2024-01-02")
row("returns: unknown benchmark", ["returns", "--benchmark", "NOPE"], INPUT,
    "keel: error: --benchmark: there is no security with symbol 'NOPE'")
for command in ("holdings", "lots", "gains", "returns", "statement --year 2024"):
    row(f"{command}: --currency not a currency code", [*command.split(), "--currency", "EURO"],
        INPUT,
        "keel: error: --currency: 'EURO' is not an ISO 4217 currency code (such as EUR, USD, JPY)")
NO_JPY = "(nor for USD/JPY, nor through a third currency); import one with 'keel import fx FILE.csv'"
row("holdings: --currency without a rate path", ["holdings", "--as-of", "2024-06-30",
    "--currency", "JPY"], INPUT, "keel: error: --currency JPY: holdings: the cost of lot 2 of QRX, "
    f"acquired 2024-01-03: no exchange rate for JPY/USD on or before 2024-01-03 {NO_JPY}")
row("returns: --currency without a rate path", ["returns", "--from", "2024-01-02", "--to",
    "2024-06-30", "--currency", "JPY"], INPUT,
    f"keel: error: --currency JPY: no exchange rate for JPY/USD on or before 2024-01-02 {NO_JPY}")
row("statement: --currency without a rate path", ["statement", "--year", "2024", "--currency",
    "JPY"], INPUT,
    f"keel: error: --currency JPY: no exchange rate for JPY/USD on or before 2024-01-02 {NO_JPY}")
row("returns: --local with --monthly", ["returns", "--year", "2024", "--local", "--monthly"], INPUT,
    "keel: error: --local: gives each account's returns over the whole period, not month by "
    "month; leave out --monthly")
row("returns: unknown method", ["returns", "--method", "geometric"], INPUT,
    "keel: error: --method: 'geometric' is not a method; choose daily or dietz")
row("returns: risk-free rate not a number", ["returns", "--risk-free", "2%"], INPUT,
    "keel: error: --risk-free: '2%' is not a rate; give an annual fraction above -1, e.g. 0.02")

row("statement: unknown paper", ["statement", "--year", "2024", "--paper", "legal"], INPUT,
    "keel: error: --paper: 'legal' is not a paper size; expected a4 or letter")
row("statement: paper with a control character", ["statement", "--year", "2024", "--paper", "a4\x1b"],
    INPUT, "keel: error: --paper: 'a4\\x1b' is not a paper size; expected a4 or letter")

# --- the command line itself: mistyped and missing commands and options ---------------------
row("command: mistyped", ["holdngs"], USAGE,
    ["keel: error: 'holdngs' is not a keel command", "Did you mean 'holdings'?",
     "Run 'keel help' for the list of commands."])
row("command: two letters swapped", ["recrod", "deposit"], USAGE,
    ["keel: error: 'recrod' is not a keel command", "Did you mean 'record'?",
     "Run 'keel help' for the list of commands."])
row("command: the start of several", ["re"], USAGE,
    ["keel: error: 're' is not a keel command",
     "Did you mean one of: 'record', 'returns', 'restore', 'reconcile', 'reopen', 'reference'?",
     "Run 'keel help' for the list of commands."])
row("command: nothing close", ["zebra"], USAGE,
    ["keel: error: 'zebra' is not a keel command", "Run 'keel help' for the list of commands."])
row("command: control characters in the word", ["hold\x1b[2J"], USAGE,
    ["keel: error: 'hold\\x1b[2J' is not a keel command", "Run 'keel help' for the list of commands."])
row("command: mistyped subcommand", ["record", "buyy"], USAGE,
    ["keel: error: 'buyy' is not a command of 'keel record'", "Did you mean 'buy'?",
     "Run 'keel help record' for its commands."])
row("command: none given", [], USAGE,
    ["keel: error: no command given",
     "Run 'keel help' for the list of commands, or 'keel demo' to see keel at work."])
row("command: a group without its command", ["account"], USAGE,
    ["keel: error: 'keel account' needs one of its commands: add, tax-status, rename, list",
     "Run 'keel help account' for what each does."])
row("option: mistyped", ["holdings", "--as-off", "2024-01-31"], USAGE,
    ["keel: error: 'keel holdings' has no option '--as-off'", "Did you mean '--as-of'?",
     "Run 'keel help holdings' for its options."])
row("option: mistyped, with =", ["holdings", "--acount=Nobody"], USAGE,
    ["keel: error: 'keel holdings' has no option '--acount'", "Did you mean '--account'?",
     "Run 'keel help holdings' for its options."])
row("option: mistyped while a required one is missing", ["record", "deposit", "--amont", "5"],
    USAGE, ["keel: error: 'keel record deposit' has no option '--amont'",
            "Did you mean '--amount'?", "Run 'keel help record deposit' for its options."])
row("option: a global option mistyped after the command", ["holdings", "--dbb", "x.db"], USAGE,
    ["keel: error: 'keel holdings' has no option '--dbb'", "Did you mean '--db'?",
     "Run 'keel help holdings' for its options."])
row("report: --csv and --json together", ["holdings", "--csv", "--json"], USAGE,
    "--json excludes --csv")
row("import: the file and its mapping both from standard input",
    ["import", "transactions", "-", "--map", "-"], INPUT,
    "keel: error: --map -: the file is read from standard input already; give the mapping as a "
    "file")
row("reconcile: the statement and its mapping both from standard input",
    ["reconcile", "-", "--date", "2024-01-31", "--map", "-"], INPUT,
    "keel: error: --map -: the statement is read from standard input already; give the mapping "
    "as a file")
row("help: an unknown command", ["help", "record", "buyy"], USAGE,
    ["keel: error: 'buyy' is not a command of 'keel record'", "Did you mean 'buy'?",
     "Run 'keel help record' for its commands."])

# --- corporate actions ----------------------------------------------------------------------
row("action: a ratio of zero", ["record", "split", "--date", "2024-03-01", "--symbol", "QRX",
                                "--ratio", "0", "--cash-in-lieu", "5"], INPUT,
    "keel: error: split: --ratio must be positive, not 0")
row("action: a negative ratio", ["record", "stock-dividend", "--date", "2024-03-01", "--symbol",
                                 "QRX", "--ratio", "-0.5"], INPUT,
    "keel: error: stock-dividend: --ratio must be positive, not -0.5")
row("action: a percentage over 100", ["record", "spinoff", "--date", "2024-03-01", "--symbol", "QRX",
                                      "--into", "VLM", "--ratio", "1", "--cost-percent", "101"],
    INPUT, "keel: error: spinoff: --cost-percent must be at most 100, not 101")
row("action: a day when no account holds the security",
    ["record", "return-of-capital", "--date", "2024-03-01", "--symbol", "VLM", "--cash", "1"], INPUT,
    "keel: error: a return-of-capital of VLM dated 2024-03-01: no account holds VLM when "
    "2024-03-01 begins (give --market-only to record it as market data for back-tests and signal "
    "checks)")
row("action: a day before the security was held",
    ["record", "delisting", "--date", "2024-01-03", "--symbol", "QRX", "--cash", "0"], INPUT,
    "keel: error: a delisting of QRX dated 2024-01-03: no account holds QRX when 2024-01-03 begins "
    "(give --market-only to record it as market data for back-tests and signal checks)")
row("action: --market-only for a security an account holds",
    ["record", "delisting", "--date", "2024-03-01", "--symbol", "QRX", "--cash", "0",
     "--market-only"], INPUT,
    "keel: error: a delisting of QRX dated 2024-03-01: --market-only, but QRX is held when "
    "2024-03-01 begins, and the action changes those lots; leave the option out")
row("import: --market-only outside actions", ["import", "prices", "{d}/seed-prices.csv",
                                              "--market-only"], INPUT,
    "keel: error: --market-only: only for importing actions")
row("action: cash in lieu without a price",
    ["record", "split", "--date", "2024-03-01", "--symbol", "QRX", "--ratio", "0.3",
     "--cash-in-lieu", ""], INPUT,
    "keel: error: split: --cash-in-lieu needs the price per unit at which fractions are paid")
row("action: a merger into a security that does not exist",
    ["record", "merger", "--date", "2024-03-01", "--symbol", "QRX", "--into", "QRXX", "--ratio", "1"],
    INPUT, "keel: error: a merger of QRX dated 2024-03-01: --into 'QRXX' is not a security of this "
    "ledger; add it first with 'keel security add'")
row("action: a void of an action that does not exist", ["action", "void", "99", "--reason", "x"],
    INPUT, "keel: error: there is no corporate action 99")
ACT = "date,symbol,action,into,ratio,cash,cost_percent,cash_in_lieu,note\n"
import_row("actions: a second action of the same kind on the same day", "actions",
           ACT + "2024-03-01,QRX,return_of_capital,,,1,,,\n2024-03-01,QRX,return_of_capital,,,2,,,\n",
           INPUT, refused("{f}:3: a return-of-capital of QRX dated 2024-03-01: action 1 is already a "
                          "return-of-capital of QRX on that day; void it first to record another"))
import_row("actions: an unknown action", "actions", ACT + "2024-03-01,QRX,buyback,,,1,,,\n", INPUT,
           refused("{f}:2: column 'action': unknown corporate action 'buyback'; expected one of: "
                   "split, merger, spinoff, return_of_capital, stock_dividend, delisting"))
import_row("actions: a percentage over 100", "actions",
           ACT + "2024-03-01,QRX,spinoff,VLM,1,,150,,\n", INPUT,
           refused("{f}:2: column 'cost_percent': spinoff: must be at most 100, not 150"))
row("confirm: a transaction no check flags", ["confirm", "2", "--reason", "fine"], INPUT,
    "keel: error: transaction 2 is not flagged by any plausibility check")
row("security change: to a symbol another security has",
    ["security", "change", "QRX", "--symbol", "VLM", "--date", "2024-03-01"], INPUT,
    "keel: error: a security with the symbol 'VLM' exists already")
row("account rename: to the same name", ["account", "rename", T, T, "--date", "2024-03-01"], INPUT,
    f"keel: error: account '{T}' has that name already")

# --- the ledger file itself ----------------------------------------------------------------
failures = []


def run_row(name, args, code, message, files, db=None):
    for fname, content in files.items():
        with open(os.path.join(D, fname), "wb") as f:
            f.write(content)
    expanded = [a.replace("{d}", D) for a in args]
    if isinstance(message, list):
        message = [m.replace("{d}", D) for m in message]
    else:
        message = message.replace("{d}", D)
    before = ledger_digest(led.path)
    if db is None:
        got_code, out, err = led.run(*expanded)
    else:
        got_code, out, err = run_with_db(db, expanded)
    after = ledger_digest(led.path)
    lines = err.splitlines()
    got = lines if isinstance(message, list) else (lines[0] if lines else "")
    ok = got_code == code and got == message and before == after
    if SHOW or not ok:
        print(f"{'ok  ' if ok else 'FAIL'} {name}: exit {got_code} (want {code}); "
              f"unchanged: {before == after}")
        if got != message:
            print(f"     got:  {got!r}\n     want: {message!r}")
    if not ok:
        failures.append(name)
    for fname in files:
        os.remove(os.path.join(D, fname))


def run_with_db(db, args):
    import subprocess
    from keel_cli import KEEL
    env = dict(os.environ, NO_COLOR="1")
    p = subprocess.run([KEEL, "--db", db, *args], capture_output=True, text=True, env=env,
                       timeout=300, errors="surrogateescape")
    return p.returncode, p.stdout, p.stderr


for r in ROWS:
    run_row(*r)

# A file that is not a ledger: refused, and left byte for byte as it was.
other = path("other.db")
con = sqlite3.connect(other)
con.execute("CREATE TABLE notes (id INTEGER PRIMARY KEY, body TEXT)")
con.execute("INSERT INTO notes (body) VALUES ('kept')")
con.commit()
con.close()
text_file = path("plain.txt")
with open(text_file, "w") as f:
    f.write("this is not a database\n" * 200)
empty_file = path("empty.db")  # 0 bytes: once taken for a new, empty ledger
open(empty_file, "w").close()
os.chmod(empty_file, 0o600)
empty_db = path("nothing.db")  # an SQLite database without a single table
con = sqlite3.connect(empty_db)
con.execute("PRAGMA user_version = 0")
con.close()
os.chmod(empty_db, 0o600)
EMPTY = (f"keel: error: {empty_file} is an empty file, not a keel ledger; only 'keel init' makes "
         "a ledger; choose another with --db")
DB_ROWS = [
    ("--db: an SQLite file that is not a ledger", other, ["holdings"], LEDGER,
     f"keel: error: {other} is an SQLite database but not a keel ledger; choose another with --db"),
    ("--db: init on an SQLite file that is not a ledger", other, ["init"], LEDGER,
     f"keel: error: {other} is an SQLite database but not a keel ledger; choose another with --db"),
    ("--db: a text file", text_file, ["account", "list"], LEDGER,
     f"keel: error: cannot open ledger {text_file}: file is not a database"),
    ("--db: a folder", D, ["account", "list"], LEDGER,
     f"keel: error: cannot open ledger {D}: it is a folder"),
    ("--db: an empty file, verify", empty_file, ["verify"], LEDGER, EMPTY),
    ("--db: an empty file, a report", empty_file, ["holdings"], LEDGER, EMPTY),
    ("--db: an empty file, a change", empty_file,
     ["account", "add", "Quill Savings"], LEDGER, EMPTY),
    ("--db: an empty file, an import", empty_file, ["import", "accounts", "{d}/none.csv"], LEDGER,
     EMPTY),
    ("--db: an empty file, a backup", empty_file, ["backup", "{d}/copy.db"], LEDGER, EMPTY),
    ("--db: an SQLite file without tables", empty_db, ["verify"], LEDGER,
     f"keel: error: {empty_db} is an empty database, not a keel ledger; only 'keel init' makes a "
     "ledger; choose another with --db"),
    ("--db: a ledger that does not exist", path("none.db"), ["holdings"], LEDGER,
     f"keel: error: no ledger at {path('none.db')}; create one with 'keel init' or choose another "
     "with --db"),
]
for name, db, args, code, message in DB_ROWS:
    snapshot = {p: open(p, "rb").read() for p in (other, text_file, empty_file, empty_db)}
    run_row(name, args, code, message, {}, db=db)
    for p, content in snapshot.items():
        if open(p, "rb").read() != content:
            print(f"FAIL {name}: {p} was changed")
            failures.append(name + " (file changed)")
check(not os.path.exists(path("none.db")), "a ledger was created without 'keel init'")
check(not os.path.exists(path("copy.db")), "a backup was made of an empty file")
for companion in ("-wal", "-shm", "-journal"):
    check(not os.path.exists(empty_file + companion), f"an empty file got a {companion}")

total = len(ROWS) + len(DB_ROWS)
print(f"{total} malformed inputs checked, {len(failures)} failed")
check(total >= 50, f"only {total} rows")
check(not failures, "rows failed: " + "; ".join(failures))
check(ledger_digest(led.path)[0] == digest, "the ledger changed over the whole table")

# --- hostile but valid text is stored exactly ----------------------------------------------
h = Ledger()
odd = "O'Neil \"Quoted\"; DROP TABLE account;-- Ωμέγα"
h.ok("account", "add", odd)
h.ok("security", "add", "ÅB-1", "--name", "Name, with comma; and \"quotes\"", "--kind", "stock",
     "--lot-size", "0.000000000001")
note = "semi;colon 'single' \"double\" \\backslash\\ tab-free ünïcödé"
h.ok("record", "deposit", "--date", "0001-01-01", "--account", odd, "--amount",
     "123456789012345678901234567890", "--note", note)
h.ok("record", "buy", "--date", "9999-12-31", "--account", odd, "--symbol", "ÅB-1", "--quantity",
     "0.000000000001", "--price", "0.000000000001", "--allow-future-date")
equal([a["name"] for a in h.json("account", "list")["accounts"]], [odd], "account name stored exactly")
hist = h.json("history")["transactions"]
equal([(t["date"], t.get("note")) for t in hist], [("0001-01-01", note), ("9999-12-31", "")],
      "dates in year 1 and 9999 and the note stored exactly")
held = h.json("holdings", "--as-of", "9999-12-31")
equal([(p["symbol"], p["quantity"], p["cost_basis"]) for p in held["positions"]],
      [("ÅB-1", "0.000000000001", "0.000000000000000000000001")],
      "1e-12 units at 1e-12 kept exactly")
equal([c["amount"] for c in held["cash"]], ["123456789012345678901234567889.999999999999999999999999"],
      "30-digit cash less a 1e-24 cost, exact")
exported = h.ok("export", "accounts")
check(f'"{odd.replace(chr(34), chr(34) * 2)}"' in exported, f"account name quoted in CSV: {exported}")
print("hostile text and extreme values stored exactly")

# --- every invisible format character is refused in names, named as Python's unicodedata names it
import unicodedata  # noqa: E402

formats = [cp for cp in range(0x110000) if unicodedata.category(chr(cp)) in ("Cf", "Zl", "Zp")]
v = Ledger()
checked = 0
for start in range(0, len(formats), 50):
    chunk = formats[start:start + 50]
    sec_file = os.path.join(v.dir.name, f"invisible-{start}.csv")
    with open(sec_file, "w", encoding="utf-8", newline="") as f:
        f.write("symbol,name,kind,currency\n")
        for cp in chunk:
            f.write(f"Z{chr(cp)}Q,Invisible test,stock,USD\n")
    code, out, err = v.run("import", "securities", sec_file)
    lines = err.splitlines()
    equal(code, INPUT, f"import of {len(chunk)} symbols with invisible characters")
    equal(len(lines), len(chunk) + 1, "one refusal per invisible character, then the summary")
    for line, cp in zip(lines, chunk):
        want = (f"{sec_file}:{chunk.index(cp) + 2}: column 'symbol': symbol 'Z<U+{cp:04X}>Q' "
                f"contains U+{cp:04X} {unicodedata.name(chr(cp))}" + INVISIBLE)
        equal(line, want, f"U+{cp:04X}")
        checked += 1
check(checked >= 150, f"only {checked} format characters checked")
equal(v.json("security", "list")["securities"], [], "no symbol with an invisible character was added")
print(f"{checked} invisible characters refused (Unicode {unicodedata.unidata_version} as Python "
      f"knows it), each named as unicodedata names it")
