/**
 * What Linux's /proc says about a process: CPU time used and peak resident memory. CPU time
 * is a cross-check that other work on the machine disturbs less than wall-clock rates.
 * NaN where /proc is absent.
 */
import { execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";

let ticksPerSecond: number | undefined;

function clockTicks(): number {
  if (ticksPerSecond === undefined) {
    try {
      ticksPerSecond =
        Number(execFileSync("getconf", ["CLK_TCK"], { encoding: "utf8" }).trim()) || 100;
    } catch {
      ticksPerSecond = 100;
    }
  }
  return ticksPerSecond;
}

/** User plus system CPU seconds the process has used so far. */
export function cpuSeconds(pid: number): number {
  try {
    const fields = readStatFields(`/proc/${pid}/stat`);
    return (Number(fields[11]) + Number(fields[12])) / clockTicks();
  } catch {
    return Number.NaN;
  }
}

/** This process's own CPU seconds (user plus system). */
export function ownCpuSeconds(): number {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1e6;
}

function statusMib(pid: number, field: "VmHWM" | "VmRSS"): number {
  try {
    const status = fs.readFileSync(`/proc/${pid}/status`, "utf8");
    const kib = new RegExp(`^${field}:\\s+(\\d+)\\s+kB`, "m").exec(status)?.[1];
    return kib ? Number(kib) / 1024 : Number.NaN;
  } catch {
    return Number.NaN;
  }
}

/** The process's peak resident memory so far, in MiB. */
export const peakRssMib = (pid: number): number => statusMib(pid, "VmHWM");

/** The process's resident memory now, in MiB. */
export const rssMib = (pid: number): number => statusMib(pid, "VmRSS");

function readStatFields(file: string): string[] {
  const stat = fs.readFileSync(file, "utf8");
  // Fields after the command name (which may hold spaces) start at field 3.
  return stat.slice(stat.lastIndexOf(")") + 2).split(" ");
}

/** Busy CPU seconds of the whole machine since boot (all CPUs, every process). */
function machineBusySeconds(): number {
  const cpu = fs
    .readFileSync("/proc/stat", "utf8")
    .split("\n")[0]!
    .trim()
    .split(/\s+/)
    .slice(1)
    .map(Number);
  const [user = 0, nice = 0, system = 0, , , irq = 0, softirq = 0, steal = 0] = cpu;
  return (user + nice + system + irq + softirq + steal) / clockTicks();
}

/** CPU seconds of the bench and of its children that have exited. */
function ownTreeSeconds(): number {
  const f = readStatFields("/proc/self/stat");
  return (Number(f[11]) + Number(f[12]) + Number(f[13]) + Number(f[14])) / clockTicks();
}

/**
 * Starts watching how much CPU other work on the machine takes; the function returned
 * gives the average number of CPUs it kept busy since (NaN where /proc is absent). Call it
 * after the bench's own children have exited, so their time counts as the bench's.
 */
export function watchOtherWork(): () => number {
  try {
    const busy0 = machineBusySeconds();
    const own0 = ownTreeSeconds();
    const t0 = Date.now();
    return () => {
      const seconds = (Date.now() - t0) / 1000;
      const others = machineBusySeconds() - busy0 - (ownTreeSeconds() - own0);
      return Math.max(0, others) / Math.max(0.001, seconds);
    };
  } catch {
    return () => Number.NaN;
  }
}

export const cpuCount = (): number => os.cpus().length;
