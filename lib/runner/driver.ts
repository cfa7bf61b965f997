/**
 * The Python side of a headless run: a short nbclient script, run on the
 * interpreter that Jupyter itself uses. It executes every code cell with the
 * tslab kernel, stops at the first failing cell (tslab aborts the rest anyway),
 * writes the executed notebook and prints one JSON line describing each cell.
 * Kept as a string so it ships inside dist/ with the rest of the runner.
 */
export const driverSource = String.raw`
import json, sys
args = json.loads(sys.argv[1])
try:
    import nbformat
    from nbclient import NotebookClient
    from nbclient.exceptions import CellTimeoutError, DeadKernelError
    from jupyter_client.kernelspec import NoSuchKernel
except ImportError as e:
    print(json.dumps({"fatal": "missing-python-package", "message": str(e)}))
    sys.exit(0)

nb = nbformat.read(args["input"], as_version=4)
cells = {}
def executed(cell, cell_index, execute_reply):
    c = execute_reply.get("content", {})
    cells[cell_index] = {"status": c.get("status"), "ename": c.get("ename"), "evalue": c.get("evalue")}

client = NotebookClient(nb, kernel_name=args["kernel"], timeout=args["timeout"], startup_timeout=args["startup"],
                        allow_errors=True, on_cell_executed=executed, resources={"metadata": {"path": args["cwd"]}})
fatal = None
try:
    client.execute()
except NoSuchKernel as e:
    fatal = {"fatal": "no-kernel", "message": str(e)}
except CellTimeoutError as e:
    fatal = {"fatal": "timeout", "message": str(e).splitlines()[0] if str(e) else "timeout"}
except DeadKernelError as e:
    fatal = {"fatal": "dead-kernel", "message": str(e)}
except Exception as e:
    fatal = {"fatal": "execution", "message": type(e).__name__ + ": " + str(e)}
if fatal is None or fatal["fatal"] in ("timeout", "dead-kernel"):
    nbformat.write(nb, args["output"])
result = {"cells": {str(k): v for k, v in cells.items()}}
if fatal:
    result.update(fatal)
print(json.dumps(result))
`;
