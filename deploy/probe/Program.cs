using PathService.Probe;

return await HealthProbe.RunAsync(args, Environment.GetEnvironmentVariable);
