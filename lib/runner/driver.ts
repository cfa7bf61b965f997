/**
 * The Python side of a headless run: a short nbclient script, run on the
 * interpreter that Jupyter itself uses. It starts the tslab kernel at once,
 * then waits for one JSON line on stdin naming the notebook to run (an empty
 * line or end of input stops it), so the kernel's start-up overlaps the checks
 * and staging done in Node. It executes every code cell, stops at the first
 * failing cell (tslab aborts the rest anyway), writes the executed notebook and
 * prints one JSON line describing each cell (after an early line with the
 * kernel's pid, which runs in a session of its own). Kept as a string so it ships
 * inside dist/ with the rest of the runner.
 */
export const driverSource = String.raw`
import asyncio, json, sys
args = json.loads(sys.argv[1])
try:
    import nbformat
    from nbclient import NotebookClient
    from nbclient.exceptions import CellTimeoutError, DeadKernelError
    from jupyter_client.kernelspec import NoSuchKernel
except ImportError as e:
    print(json.dumps({"fatal": "missing-python-package", "message": str(e)}), flush=True)
    sys.exit(0)

cells = {}
def executed(cell, cell_index, execute_reply):
    c = execute_reply.get("content", {})
    cells[cell_index] = {"status": c.get("status"), "ename": c.get("ename"), "evalue": c.get("evalue")}

async def main():
    client = NotebookClient(nbformat.v4.new_notebook(), kernel_name=args["kernel"], timeout=args["timeout"], startup_timeout=args["startup"],
                            allow_errors=True, on_cell_executed=executed, resources={"metadata": {"path": args["cwd"]}})
    try:
        client.km = client.create_kernel_manager()
        await client.async_start_new_kernel()
        # The kernel runs in a session of its own; Node needs its pid to stop it on an interruption.
        print(json.dumps({"kernel_pid": getattr(client.km.provisioner, "pid", None)}), flush=True)
        await client.async_start_new_kernel_client()
    except NoSuchKernel as e:
        return {"fatal": "no-kernel", "message": str(e)}
    line = await asyncio.get_running_loop().run_in_executor(None, sys.stdin.readline)
    if not line.strip():
        await client._async_cleanup_kernel()
        return {"fatal": "cancelled", "message": "no notebook was given"}
    job = json.loads(line)
    client.nb = nbformat.read(job["input"], as_version=4)
    fatal = None
    try:
        await client.async_execute()
    except CellTimeoutError as e:
        fatal = {"fatal": "timeout", "message": str(e).splitlines()[0] if str(e) else "timeout"}
    except DeadKernelError as e:
        fatal = {"fatal": "dead-kernel", "message": str(e)}
    except Exception as e:
        fatal = {"fatal": "execution", "message": type(e).__name__ + ": " + str(e)}
    if fatal is None or fatal["fatal"] in ("timeout", "dead-kernel"):
        nbformat.write(client.nb, job["output"])
    result = {"cells": {str(k): v for k, v in cells.items()}}
    if fatal:
        result.update(fatal)
    return result

print(json.dumps(asyncio.run(main())), flush=True)
`;
